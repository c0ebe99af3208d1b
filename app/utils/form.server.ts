// Reading what a request carries: a form that is not a form, is too large, is cut off, is not UTF-8 or holds
// a NUL byte is refused with a sentence (413/415/400) before any action logic runs, instead of failing deep
// inside it as a 500 or being stored garbled.

/** A refusal the action throws; React Router shows it on the error page, a fetch gets it as JSON. */
function refuse(status: number, error: string): never {
  throw Response.json({ error }, { status });
}

/**
 * Reads and drops the rest of a refused body in the background, so the answer goes out now and the
 * connection stays usable for the client's next request; past 16 MB the connection is given up instead.
 */
function drainInBackground(reader: ReadableStreamDefaultReader<Uint8Array>, cap = 16 * BODY_LIMIT_BYTES) {
  void (async () => {
    let dropped = 0;
    try {
      for (;;) {
        const { done, value } = await reader.read();
        if (done) return;
        dropped += value.length;
        if (dropped > cap) return void (await reader.cancel());
      }
    } catch {
      // The client went away; nothing to drain.
    }
  })();
}

/** Forms and JSON bodies are small (files go straight to storage); 1 MB is far above the largest form. */
export const BODY_LIMIT_BYTES = 1_000_000;
export const TOO_LARGE = "The request is too large: forms and API bodies are at most 1 MB (files go straight to storage, not through this address).";
export const NUL_REFUSAL = "The input contains a NUL character (an invisible control byte), which cannot be stored; remove it and send again.";
const CUT_OFF = "The request could not be read; it may have been cut off on the way. Please send it again.";
const NOT_UTF8 = "The form is not UTF-8 text; send it from the page, or encode it as UTF-8.";

/** True when a string anywhere in the value holds U+0000, which PostgreSQL text cannot store. */
export function hasNul(value: unknown): boolean {
  if (typeof value === "string") return value.includes("\u0000");
  if (Array.isArray(value)) return value.some(hasNul);
  if (value && typeof value === "object") return Object.entries(value).some(([k, v]) => k.includes("\u0000") || hasNul(v));
  return false;
}

/** The body's bytes, refusing more than the limit (declared or actually sent) and a body that breaks off. */
export async function readBodyBytes(request: Request, limit = BODY_LIMIT_BYTES): Promise<Uint8Array<ArrayBuffer>> {
  if (!request.body) return new Uint8Array();
  const reader = request.body.getReader();
  if (Number(request.headers.get("content-length") ?? 0) > limit) {
    drainInBackground(reader);
    refuse(413, TOO_LARGE);
  }
  const chunks: Uint8Array[] = [];
  let size = 0;
  try {
    for (;;) {
      const { done, value } = await reader.read();
      if (done) break;
      size += value.length;
      // Answer now; cancelling the stream instead would reset the connection before the answer is sent.
      if (size > limit) {
        drainInBackground(reader);
        refuse(413, TOO_LARGE);
      }
      chunks.push(value);
    }
  } catch (err) {
    if (err instanceof Response) throw err;
    refuse(400, CUT_OFF);
  }
  const bytes = new Uint8Array(size);
  let at = 0;
  for (const c of chunks) {
    bytes.set(c, at);
    at += c.length;
  }
  return bytes;
}

const utf8 = new TextDecoder("utf-8", { fatal: true });
const isHex = (b: number) => (b >= 0x30 && b <= 0x39) || (b >= 0x41 && b <= 0x46) || (b >= 0x61 && b <= 0x66);

function isUtf8(bytes: Uint8Array) {
  try {
    utf8.decode(bytes);
    return true;
  } catch {
    return false;
  }
}

/** Whether a urlencoded body decodes to UTF-8: its raw bytes with each %XX escape turned into its byte. */
function urlencodedIsUtf8(body: Uint8Array) {
  const bytes = new Uint8Array(body.length);
  let n = 0;
  for (let i = 0; i < body.length; i++) {
    if (body[i] === 0x25 && i + 2 < body.length && isHex(body[i + 1]) && isHex(body[i + 2])) {
      bytes[n++] = parseInt(String.fromCharCode(body[i + 1], body[i + 2]), 16);
      i += 2;
    } else bytes[n++] = body[i];
  }
  return isUtf8(bytes.subarray(0, n));
}

/** The body as UTF-8 text (JSON bodies, provider events), with the same limits as forms. */
export async function readBodyText(request: Request, limit = BODY_LIMIT_BYTES): Promise<string> {
  const bytes = await readBodyBytes(request, limit);
  try {
    return utf8.decode(bytes);
  } catch {
    refuse(400, "The request body is not UTF-8 text.");
  }
}

const URLENCODED = /^\s*application\/x-www-form-urlencoded\s*(;|$)/i;
const MULTIPART = /^\s*multipart\/form-data\s*;/i;

/** The submitted form fields, or a thrown 415 (not a form), 413 (too large) or 400 (cut off, not UTF-8, NUL). */
export async function readForm(request: Request): Promise<FormData> {
  const type = request.headers.get("content-type") ?? "";
  const urlencoded = URLENCODED.test(type);
  if (!urlencoded && !MULTIPART.test(type)) {
    refuse(415, "This address takes a form (application/x-www-form-urlencoded or multipart/form-data); send the form from the page.");
  }
  const bytes = await readBodyBytes(request);
  // No screen sends files through the app (they go to storage directly), so a multipart body is text too.
  if (!(urlencoded ? urlencodedIsUtf8(bytes) : isUtf8(bytes))) refuse(400, NOT_UTF8);
  let form: FormData;
  try {
    form = await new Response(bytes, { headers: { "Content-Type": type } }).formData();
  } catch {
    refuse(400, CUT_OFF);
  }
  for (const [name, value] of form.entries()) {
    if (name.includes("\u0000") || (typeof value === "string" && value.includes("\u0000"))) refuse(400, NUL_REFUSAL);
  }
  return form;
}
