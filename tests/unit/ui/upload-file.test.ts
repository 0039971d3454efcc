/**
 * The browser's file upload (lib/ui/api.ts uploadFile), used by the catalogue and snapshot pages:
 * what it sends, and a refusal turned into an ApiClientError carrying every issue for the form.
 */
import { afterEach, describe, expect, it, vi } from "vitest";
import { ApiClientError, uploadFile } from "@/lib/ui/api";

afterEach(() => {
  vi.unstubAllGlobals();
});

function answer(status: number, body: string) {
  const seen: { url: string; init: RequestInit }[] = [];
  vi.stubGlobal("fetch", async (url: string, init: RequestInit) => {
    seen.push({ url, init });
    return new Response(body, { status, headers: { "content-type": "application/json" } });
  });
  return seen;
}

describe("uploadFile", () => {
  it("posts the file and the trimmed name as multipart/form-data and returns the answer", async () => {
    const seen = answer(201, JSON.stringify({ snapshot: { id: "snp_1", name: "Loading bay", version: 2 } }));
    const result = await uploadFile<{ snapshot: { version: number } }>("/api/v1/studios/std_1/snapshots", new Blob(['{"bodies":[]}'], { type: "application/json" }), "bay.json", "  Loading bay ");
    expect(result.snapshot.version).toBe(2);
    expect(seen).toHaveLength(1);
    expect(seen[0].url).toBe("/api/v1/studios/std_1/snapshots");
    expect(seen[0].init.method).toBe("POST");
    const form = seen[0].init.body as FormData;
    expect(form.get("name")).toBe("Loading bay");
    const file = form.get("file") as File;
    expect(file.name).toBe("bay.json");
    expect(await file.text()).toBe('{"bodies":[]}');
  });

  it("leaves out a blank name, so the server takes it from the file", async () => {
    const seen = answer(201, "{}");
    await uploadFile("/api/v1/studios/std_1/catalogues", new Blob(["name\n"]), "crates.csv", "   ");
    expect((seen[0].init.body as FormData).has("name")).toBe(false);
  });

  it("turns a refusal into an ApiClientError with its code, field and every issue", async () => {
    const issues = [
      { field: "file.row 3.mass_kg", message: 'Row 3, mass_kg: not a number: "heavy" (mass in kg)' },
      { field: "file.row 6.name", message: 'Row 6, name: duplicate name "Crate"' },
    ];
    answer(422, JSON.stringify({ error: { code: "invalid_catalogue", message: "The catalogue was not saved. 2 problems", field: "file.row 3.mass_kg", issues } }));
    const error = await uploadFile("/api/v1/studios/std_1/catalogues", new Blob(["x"]), "crates.csv", "Crates").catch((caught: unknown) => caught);
    expect(error).toBeInstanceOf(ApiClientError);
    expect(error).toMatchObject({ status: 422, code: "invalid_catalogue", message: "The catalogue was not saved. 2 problems", field: "file.row 3.mass_kg", issues });
  });

  it("names the status when a refusal has no JSON body", async () => {
    answer(413, "Payload Too Large");
    const error = await uploadFile("/api/v1/studios/std_1/snapshots", new Blob(["x"]), "big.json", "").catch((caught: unknown) => caught);
    expect(error).toMatchObject({ status: 413, code: "http_413", message: "The server answered 413.", issues: [] });
  });
});
