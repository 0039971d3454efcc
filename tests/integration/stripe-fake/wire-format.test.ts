import { describe, expect, it } from "vitest";
import { encodeForm, parseForm, lineAmountCents } from "@/lib/fakes/stripe";
import { FormParseError } from "@/lib/fakes/stripe/form";
import { cardOutcome, passesLuhn } from "@/lib/fakes/stripe/cards";
import { addInterval } from "@/lib/fakes/stripe/resources/billing";

describe("form parsing (Stripe's bracketed form encoding)", () => {
  it("builds nested objects and indexed arrays the way the SDK encodes them", () => {
    const parsed = parseForm(
      "mode=payment&line_items[0][price]=price_A&line_items[0][quantity]=2&line_items[1][price_data][currency]=usd" +
        "&line_items[1][price_data][unit_amount]=1500&line_items[1][quantity]=1&metadata[studio_id]=std_pebble",
    );
    expect(parsed).toEqual({
      mode: "payment",
      line_items: [{ price: "price_A", quantity: "2" }, { price_data: { currency: "usd", unit_amount: "1500" }, quantity: "1" }],
      metadata: { studio_id: "std_pebble" },
    });
  });

  it("takes empty-bracket arrays (expand[]=…) and percent-encoded brackets alike", () => {
    expect(parseForm("expand[]=customer&expand[]=line_items")).toEqual({ expand: ["customer", "line_items"] });
    expect(parseForm("expand%5B0%5D=customer&expand%5B1%5D=data.customer")).toEqual({ expand: ["customer", "data.customer"] });
  });

  it("orders array items by index, not by arrival", () => {
    expect(parseForm("items[1][price]=b&items[0][price]=a")).toEqual({ items: [{ price: "a" }, { price: "b" }] });
  });

  it("decodes + as space and percent escapes, keeps = inside values and empty values", () => {
    expect(parseForm("name=Pebble+Forge%20Games&note=a%3Db%26c&description=")).toEqual({ name: "Pebble Forge Games", note: "a=b&c", description: "" });
  });

  it("rejects prototype-polluting keys and mixed array/object keys with the parameter named", () => {
    expect(() => parseForm("__proto__[admin]=1")).toThrow(FormParseError);
    try {
      parseForm("items[0]=a&items[x]=b");
      throw new Error("should have thrown");
    } catch (err) {
      expect(err).toBeInstanceOf(FormParseError);
      expect((err as FormParseError).param).toBe("items[x]");
    }
    expect(({} as Record<string, unknown>).admin).toBeUndefined();
  });

  it("round-trips what encodeForm writes", () => {
    const data = { customer: "cus_1", items: [{ price: "price_1", metadata: { tier: "indie" } }], metadata: { studio_id: "std_1", "key with space": "v&=" } };
    expect(parseForm(encodeForm(data))).toEqual(data);
  });
});

describe("invoice line money (integer cents, decimal unit prices)", () => {
  it("multiplies exactly and rounds once, half away from zero", () => {
    // Plain arithmetic: 1,234 units × 0.25 ¢ = 308.5 ¢ → 309 ¢; Stripe rounds line amounts to the nearest cent (from memory).
    expect(lineAmountCents("1234", "0.25")).toBe(309);
    // 1,233 × 0.25 ¢ = 308.25 ¢ → 308 ¢ (arithmetic).
    expect(lineAmountCents("1233", "0.25")).toBe(308);
    // 0.1 + 0.2 style trap: 3 × 0.1 ¢ = 0.3 ¢ exactly → 0 ¢; binary floats would give 0.30000000000000004 (arithmetic).
    expect(lineAmountCents("3", "0.1")).toBe(0);
    // 60,000 ms × 0.0025 ¢ = 150 ¢ exactly (arithmetic).
    expect(lineAmountCents("60000", "0.0025")).toBe(150);
    // Whole-cent price: 7 × 1500 ¢ = 10,500 ¢ (arithmetic).
    expect(lineAmountCents(7, 1500)).toBe(10_500);
  });
});

describe("test cards", () => {
  it("applies the Luhn check and Stripe's published test numbers", () => {
    // Stripe testing docs (docs.stripe.com/testing): 4242… approves, 4000 0000 0000 0002 declines (generic_decline),
    // 4000 0000 0000 9995 declines with insufficient_funds. All three pass the Luhn checksum (ISO/IEC 7812-1 Annex B).
    expect(passesLuhn("4242424242424242")).toBe(true);
    expect(passesLuhn("4242424242424241")).toBe(false);
    expect(cardOutcome("4242 4242 4242 4242")).toEqual({ ok: true, last4: "4242" });
    expect(cardOutcome("4000 0000 0000 0002")).toMatchObject({ ok: false, code: "card_declined", declineCode: "generic_decline" });
    expect(cardOutcome("4000000000009995")).toMatchObject({ ok: false, code: "card_declined", declineCode: "insufficient_funds" });
    expect(cardOutcome("1234")).toMatchObject({ ok: false, code: "incorrect_number" });
  });
});

describe("billing periods", () => {
  it("adds calendar months in UTC and clamps to the month's last day", () => {
    const jan31 = Date.UTC(2027, 0, 31, 12, 0, 0) / 1000;
    // Calendar arithmetic: 31 Jan 2027 + 1 month → 28 Feb 2027 (2027 is not a leap year, Gregorian rule).
    expect(new Date(addInterval(jan31, "month", 1) * 1000).toISOString()).toBe("2027-02-28T12:00:00.000Z");
    // 31 Jan 2028 + 1 month → 29 Feb 2028 (2028 is a leap year).
    expect(new Date(addInterval(Date.UTC(2028, 0, 31) / 1000, "month", 1) * 1000).toISOString()).toBe("2028-02-29T00:00:00.000Z");
    // 1 week = 604,800 s (7 × 86,400).
    expect(addInterval(1_000, "week", 1)).toBe(605_800);
  });
});
