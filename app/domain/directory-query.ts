// The lab directory's query: parameters, their validation and the vocabularies they use (browser-safe).
import { z } from "zod";
import { ANODES } from "~/diffraction/wavelengths";
import { GHS_CODES, SPECIAL_CATEGORY_CODES } from "~/domain/hazard-codes";

export const TECHNIQUES = ["powder_reflection", "powder_transmission", "thin_film", "single_crystal", "total_scattering", "neutron_powder"] as const;
export const PAGE_SIZE = 20;

const optionalNumber = (what: string, min: number, max: number) =>
  z.coerce
    .number({ error: `${what} must be a number.` })
    .refine((n) => Number.isFinite(n) && n > min && n <= max, `${what} must be greater than ${min} and at most ${max}.`)
    .optional();

/** The query parameters of GET /api/labs; empty parameters count as absent. */
export const DirectoryQuery = z.object({
  technique: z.enum(TECHNIQUES, { error: `technique must be one of ${TECHNIQUES.join(", ")}.` }).optional(),
  source: z.enum(ANODES as [string, ...string[]], { error: `source must be one of ${ANODES.join(", ")}.` }).optional(),
  dMin: optionalNumber("dMin (Å)", 0, 100),
  temperatureK: optionalNumber("temperatureK", 0, 5000),
  hazard: z
    .array(z.enum([...GHS_CODES, ...SPECIAL_CATEGORY_CODES], { error: "hazard must be a GHS pictogram code (GHS01–GHS09) or a special category." }))
    .max(16)
    .default([]),
  maxPrice: optionalNumber("maxPrice (per sample, major units)", 0, 1_000_000),
  turnaroundDays: z.coerce.number({ error: "turnaroundDays must be a whole number." }).int("turnaroundDays must be a whole number.").min(1).max(365).optional(),
  q: z
    .string()
    .trim()
    .max(100, "q has at most 100 characters.")
    .refine((v) => !v.includes("\u0000"), "q cannot contain a NUL character.")
    .optional(),
  page: z.coerce.number({ error: "page must be a whole number." }).int("page must be a whole number.").min(1, "page starts at 1.").max(10_000).default(1),
});
export type DirectoryFilters = z.infer<typeof DirectoryQuery>;

/** Reads the URL's parameters; `{ error, field }` names the first bad one. */
export function parseDirectoryQuery(params: URLSearchParams): { ok: true; filters: DirectoryFilters } | { ok: false; error: string; field: string } {
  const raw: Record<string, unknown> = {};
  for (const key of ["technique", "source", "dMin", "temperatureK", "maxPrice", "turnaroundDays", "q", "page"]) {
    const v = params.get(key);
    if (v !== null && v !== "") raw[key] = v;
  }
  raw.hazard = params.getAll("hazard").filter((h) => h !== "");
  const known = new Set([...Object.keys(DirectoryQuery.shape)]);
  const unknown = [...params.keys()].find((k) => !known.has(k));
  if (unknown) return { ok: false, error: `Unknown parameter "${unknown.slice(0, 40)}".`, field: unknown.slice(0, 40) };
  const parsed = DirectoryQuery.safeParse(raw);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    return { ok: false, error: issue.message, field: String(issue.path[0] ?? "query") };
  }
  return { ok: true, filters: parsed.data };
}
