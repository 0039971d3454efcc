/** The colour-scheme choice: stored in localStorage, applied as data-theme on <html>. */
export type ThemeChoice = "light" | "dark";

export const THEME_STORAGE_KEY = "kickdrift-theme";

/**
 * Runs inline in <head> before first paint so a stored choice never flashes the other scheme.
 * Without a stored choice the attribute stays unset and the CSS follows prefers-color-scheme.
 */
export const THEME_BOOT_SCRIPT = `(function(){try{var t=localStorage.getItem(${JSON.stringify(THEME_STORAGE_KEY)});if(t==="light"||t==="dark"){document.documentElement.setAttribute("data-theme",t);}}catch(e){}})();`;

export function currentTheme(): ThemeChoice {
  const attribute = document.documentElement.getAttribute("data-theme");
  if (attribute === "light" || attribute === "dark") return attribute;
  return window.matchMedia("(prefers-color-scheme: dark)").matches ? "dark" : "light";
}

export function applyTheme(theme: ThemeChoice): void {
  document.documentElement.setAttribute("data-theme", theme);
  try {
    localStorage.setItem(THEME_STORAGE_KEY, theme);
  } catch {
    // Storage can be unavailable (private windows); the choice then lasts for this page only.
  }
}
