// The HTTP side of direct uploads: JSON bodies in, JSON answers out, and refused steps as `{ error }` with their status.
import type { FileKind } from "~/domain/order-files";
import { UploadProblem, type CompletedUpload, type StartUploadInput } from "~/models/files/files.server";
import { StorageUnavailable, uploadTargetFor, type UploadRule } from "~/models/files/storage.server";
import { hasNul, NUL_REFUSAL, readBodyText } from "~/utils/form.server";

/** Runs an upload step and turns a refusal into a JSON `{ error }` answer with its status. */
export async function answerUploadStep(step: () => Promise<Response>): Promise<Response> {
  try {
    return await step();
  } catch (err) {
    if (err instanceof UploadProblem || err instanceof StorageUnavailable) return Response.json({ error: err.message }, { status: err.status });
    throw err;
  }
}

/** The JSON object a request carries; anything else is a 400 refusal. */
export async function readJsonObject(request: Request, { emptyIsObject = false } = {}): Promise<Record<string, unknown>> {
  const text = await readBodyText(request);
  if (!text.trim() && emptyIsObject) return {};
  let body: unknown = null;
  try {
    body = JSON.parse(text);
  } catch {
    body = null;
  }
  if (!body || typeof body !== "object" || Array.isArray(body)) throw new UploadProblem("Send a JSON object.");
  if (hasNul(body)) throw new UploadProblem(NUL_REFUSAL);
  return body as Record<string, unknown>;
}

/** The start fields from a JSON body: `{ name, size, sha256?, sampleId?, kind? }`. */
export function startInputFrom(body: Record<string, unknown>): StartUploadInput {
  const text = (v: unknown) => (typeof v === "string" ? v : v == null ? null : String(v));
  return {
    name: text(body.name) ?? "",
    size: typeof body.size === "number" ? body.size : Number(body.size ?? NaN),
    sha256: text(body.sha256),
    sampleId: text(body.sampleId),
    kind: (text(body.kind) ?? undefined) as FileKind | undefined,
  };
}

/**
 * The answer to `complete`: 200 with the stored file (a scan with the format it was read as, and any warning to
 * read before delivering), or 422 with the reason it was refused.
 */
export function completedUploadResponse(result: CompletedUpload) {
  const { file } = result;
  if (result.stored) {
    return Response.json({
      fileId: file.id,
      name: file.name,
      version: file.version,
      state: "stored",
      sha256: file.sha256,
      ...(file.kind === "scan" && file.scanInfo ? { scanFormat: file.scanFormat, scanFormatLabel: file.scanInfo.formatLabel } : {}),
      warnings: result.warnings,
    });
  }
  return Response.json({ fileId: file.id, name: file.name, version: file.version, state: "rejected", error: result.reason }, { status: 422 });
}

/**
 * Answers a DirectUpload component's "upload-target" request: checks the declared file against the rule
 * and returns `{ target }` (200) or `{ error }` (400). The caller has already checked who may upload.
 */
export async function uploadTargetResponse(formData: FormData, rule: UploadRule, prefix: string) {
  const file = {
    name: String(formData.get("fileName") ?? ""),
    size: Number(formData.get("size") ?? NaN),
    type: String(formData.get("type") ?? ""),
  };
  const found = await uploadTargetFor(file, rule, prefix);
  if (!found.ok) return Response.json({ error: found.error }, { status: 400 });
  return Response.json({ target: found.target });
}
