import { afterEach, describe, expect, it, vi } from "vitest";
import { stripeApiAddress } from "@/lib/billing/stripe";

afterEach(() => vi.unstubAllEnvs());

describe("STRIPE_API_URL", () => {
  it("unset: the SDK's own address (Stripe itself)", () => {
    vi.stubEnv("STRIPE_API_URL", "");
    expect(stripeApiAddress()).toEqual({});
  });
  it("the compose file's fake service: host, port and plain http", () => {
    vi.stubEnv("STRIPE_API_URL", "http://stripe:12111");
    expect(stripeApiAddress()).toEqual({ host: "stripe", port: 12111, protocol: "http" });
  });
  it("https without a port takes 443", () => {
    vi.stubEnv("STRIPE_API_URL", "https://stripe-proxy.internal");
    expect(stripeApiAddress()).toEqual({ host: "stripe-proxy.internal", port: 443, protocol: "https" });
  });
  it("names the setting and the bad value", () => {
    vi.stubEnv("STRIPE_API_URL", "stripe:12111");
    expect(() => stripeApiAddress()).toThrow(/STRIPE_API_URL must use http or https; got stripe:12111/);
    vi.stubEnv("STRIPE_API_URL", "not a url");
    expect(() => stripeApiAddress()).toThrow(/STRIPE_API_URL must be a URL/);
  });
});
