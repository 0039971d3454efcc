/**
 * The route plumbing shared by the upload kinds (lib/uploads/api.ts): the upload form read with the
 * kind's limit in its words, a form without its file refused naming the field, and a stored file
 * answered as a download with the same bytes and their hash.
 */
import { describe, expect, it } from "vitest";
import { catalogueUploads } from "@/lib/catalogues/store";
import { MAX_UPLOAD_BODY_BYTES } from "@/lib/catalogues/api";
import { snapshotUploads } from "@/lib/snapshots/store";
import { fileDownload, fileLimitText, readUploadForm } from "@/lib/uploads/api";
import { contentHash } from "@/lib/uploads/versioned";

function formRequest(form: FormData): Request {
  return new Request("http://localhost/api/v1/studios/std_1/catalogues", { method: "POST", body: form });
}

describe("upload routes' shared parts", () => {
  it("states each kind's per-file limit in bytes and in KiB or MiB", () => {
    // 256 KiB = 262,144 bytes and 4 MiB = 4,194,304 bytes (binary prefixes, IEC 80000-13:2008).
    expect(fileLimitText(catalogueUploads.kind)).toBe("262,144 bytes (256 KiB) per file");
    expect(fileLimitText(snapshotUploads.kind)).toBe("4,194,304 bytes (4 MiB) per file");
  });

  it("reads the file, other files and the text fields of a form", async () => {
    const form = new FormData();
    form.set("name", "Crate row");
    form.set("file", new Blob(["name,mass_kg\n"], { type: "text/csv" }), "crates.csv");
    form.set("original", new Blob(["name;mass_kg\n"], { type: "text/csv" }), "crates-original.csv");
    const read = await readUploadForm(formRequest(form), catalogueUploads.kind, MAX_UPLOAD_BODY_BYTES, "the catalogue (CSV or JSON)");
    expect(read.fields.get("name")).toBe("Crate row");
    expect(read.file.fileName).toBe("crates.csv");
    expect(new TextDecoder().decode(read.file.bytes)).toBe("name,mass_kg\n");
    expect(read.files.get("original")?.fileName).toBe("crates-original.csv");
  });

  it("refuses a form without its file, naming the field and what belongs in it", async () => {
    const form = new FormData();
    form.set("name", "Crate row");
    await expect(readUploadForm(formRequest(form), snapshotUploads.kind, 64 * 1024, "the snapshot (JSON)")).rejects.toMatchObject({
      code: "validation_failed",
      field: "file",
      message: 'file: attach the snapshot (JSON) in a field named "file".',
    });
  });

  it("refuses a body over the limit with a 413 stating the kind's per-file limit", async () => {
    const form = new FormData();
    form.set("file", new Blob([new Uint8Array(4096)]), "big.csv");
    await expect(readUploadForm(formRequest(form), catalogueUploads.kind, 1024, "the catalogue (CSV or JSON)")).rejects.toMatchObject({
      code: "payload_too_large",
      message: "file: the upload exceeds the limit (262,144 bytes (256 KiB) per file).",
    });
  });

  it("answers a stored file with its bytes, its hash as header and ETag, and a safe file name", async () => {
    const bytes = new TextEncoder().encode('{"bodies":[]}');
    const response = fileDownload({ fileName: 'loading "bay"\u00e9.json', bytes, contentHash: contentHash(bytes) }, "application/json");
    expect(response.status).toBe(200);
    expect(new Uint8Array(await response.arrayBuffer())).toEqual(bytes);
    expect(response.headers.get("content-type")).toBe("application/json");
    expect(response.headers.get("content-disposition")).toBe('attachment; filename="loading _bay__.json"');
    expect(response.headers.get("x-content-sha256")).toBe(contentHash(bytes));
    expect(response.headers.get("etag")).toBe(`"${contentHash(bytes)}"`);
    expect(response.headers.get("cache-control")).toBe("no-store");
  });
});
