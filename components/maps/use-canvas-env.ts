"use client";
/**
 * Shared browser plumbing of the canvas components: the element's CSS width (ResizeObserver),
 * the device pixel ratio, and a counter that changes whenever the theme does (the `data-theme`
 * attribute on <html> or the OS colour scheme), so canvases redraw with the new chrome colours.
 */
import { useEffect, useLayoutEffect, useState, type RefObject } from "react";

export function useElementWidth(ref: RefObject<HTMLElement | null>): number {
  const [width, setWidth] = useState(0);
  // Measured before the browser paints (a layout effect), so a canvas draws in the commit that mounts
  // it instead of painting an empty box first and drawing one render later.
  useLayoutEffect(() => {
    const element = ref.current;
    if (!element) return;
    const observer = new ResizeObserver((entries) => {
      const next = Math.floor(entries[0]?.contentRect.width ?? 0);
      setWidth((previous) => (previous === next ? previous : next));
    });
    observer.observe(element);
    setWidth(Math.floor(element.getBoundingClientRect().width));
    return () => observer.disconnect();
  }, [ref]);
  return width;
}

export function useDevicePixelRatio(): number {
  const [dpr, setDpr] = useState(1);
  useEffect(() => {
    let media: MediaQueryList | null = null;
    const update = () => {
      setDpr(window.devicePixelRatio || 1);
      media?.removeEventListener("change", update);
      // A query on the current ratio fires when the window moves to a screen with another one.
      media = window.matchMedia(`(resolution: ${window.devicePixelRatio || 1}dppx)`);
      media.addEventListener("change", update);
    };
    update();
    return () => media?.removeEventListener("change", update);
  }, []);
  return dpr;
}

export function useThemeVersion(): number {
  const [version, setVersion] = useState(0);
  useEffect(() => {
    const bump = () => setVersion((v) => v + 1);
    const observer = new MutationObserver(bump);
    observer.observe(document.documentElement, { attributes: true, attributeFilter: ["data-theme", "class"] });
    const media = window.matchMedia("(prefers-color-scheme: dark)");
    media.addEventListener("change", bump);
    return () => {
      observer.disconnect();
      media.removeEventListener("change", bump);
    };
  }, []);
  return version;
}
