/** Where a refusal's messages land on a form: beside one field, or beside a list field for anything inside it. */
import { describe, expect, it } from "vitest";
import { ApiClientError } from "@/lib/ui/api";

describe("ApiClientError messages for form fields", () => {
  it("places an issue inside a list (scopes.1) at the list's field, and no other field's", () => {
    const error = new ApiClientError(400, "validation_failed", "Request body is invalid", undefined, [
      { field: "name", message: "name must not be empty" },
      { field: "scopes.1", message: 'scope "admin" is not one of read, write' },
    ]);
    expect(error.messageUnder("scopes")).toBe('scope "admin" is not one of read, write');
    expect(error.messageFor("scopes")).toBeUndefined();
    expect(error.messageUnder("name")).toBe("name must not be empty");
    // A field whose name merely starts the same way is another field.
    expect(error.messageUnder("scope")).toBeUndefined();
  });

  it("falls back to the top-level error when it names the list or something in it", () => {
    expect(new ApiClientError(400, "validation_failed", "pick at least one event", "events").messageUnder("events")).toBe("pick at least one event");
    expect(new ApiClientError(400, "validation_failed", "unknown event type", "events[2]").messageUnder("events")).toBe("unknown event type");
    expect(new ApiClientError(409, "conflict", "already exists", "url").messageUnder("events")).toBeUndefined();
  });
});
