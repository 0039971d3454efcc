import { z } from "@/lib/zod";

/**
 * Unicode's bidirectional formatting characters (Unicode Standard Annex #9, "Explicit Directional
 * Embeddings/Overrides/Isolates" and the implicit marks). In a name they make text display in
 * another order than it is stored ("exe.txt" shown for "txt.exe"), so names refuse them.
 */
export const BIDI_CONTROLS = /[\u061C\u200E\u200F\u202A-\u202E\u2066-\u2069]/;

/** Why a name may not be used as given, or null. The text is expected trimmed and NFC-normalised. */
export function nameTextProblem(text: string): string | null {
  const bidi = BIDI_CONTROLS.exec(text);
  if (bidi) return `holds the bidirectional control character U+${bidi[0].charCodeAt(0).toString(16).toUpperCase().padStart(4, "0")}, which makes text display in another order than it is written`;
  if (/[\u0000-\u001f\u007f]/.test(text)) return "holds a control character (tab, line break or NUL)";
  return null;
}

/**
 * A person-given name (user, studio, token): trimmed, stored in Unicode normal form C (so the
 * same name typed on two systems compares equal), with no control or bidirectional characters.
 */
export function displayNameSchema(label: string, max: number) {
  return z
    .string({ error: `${label} is required.` })
    .trim()
    .transform((text) => text.normalize("NFC"))
    .pipe(
      z
        .string()
        .min(1, { error: `${label} is required.` })
        .max(max, { error: `${label} must be at most ${max} characters.` })
        .superRefine((text, ctx) => {
          const problem = nameTextProblem(text);
          if (problem) ctx.addIssue({ code: "custom", message: `${label} ${problem}.` });
        }),
    );
}
