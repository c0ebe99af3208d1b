// Reading what a request carries: a form that is not a form, is cut off or holds a NUL byte is refused
// with a sentence (415/400) before any action logic runs, instead of failing deep inside it as a 500.

/** A refusal the action throws; React Router shows it on the error page, a fetch gets it as JSON. */
function refuse(status: number, error: string): never {
  throw Response.json({ error }, { status });
}

export const NUL_REFUSAL = "The input contains a NUL character (an invisible control byte), which cannot be stored; remove it and send again.";

/** True when a string anywhere in the value holds U+0000, which PostgreSQL text cannot store. */
export function hasNul(value: unknown): boolean {
  if (typeof value === "string") return value.includes("\u0000");
  if (Array.isArray(value)) return value.some(hasNul);
  if (value && typeof value === "object") return Object.entries(value).some(([k, v]) => k.includes("\u0000") || hasNul(v));
  return false;
}

const FORM_TYPES = /^\s*(application\/x-www-form-urlencoded|multipart\/form-data)\s*(;|$)/i;

/** The submitted form fields, or a thrown 415 (not a form), 400 (unreadable, cut off) or 400 (NUL byte). */
export async function readForm(request: Request): Promise<FormData> {
  const type = request.headers.get("content-type") ?? "";
  if (!FORM_TYPES.test(type)) refuse(415, "This address takes a form (application/x-www-form-urlencoded or multipart/form-data); send the form from the page.");
  let form: FormData;
  try {
    form = await request.formData();
  } catch {
    refuse(400, "The form could not be read; it may have been cut off on the way. Please send it again.");
  }
  for (const [name, value] of form.entries()) {
    if (name.includes("\u0000") || (typeof value === "string" && value.includes("\u0000"))) refuse(400, NUL_REFUSAL);
  }
  return form;
}
