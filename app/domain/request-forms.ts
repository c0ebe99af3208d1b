// The new-request wizard's steps and the zod schemas of each step's form (shared by the browser and the server).
import { z } from "zod";
import { CENTERINGS, CRYSTAL_SYSTEMS, checkCellForSystem, checkCentering, type Centering, type CrystalSystem } from "~/diffraction/cell";
import { CELL_KEYS, type AcceptanceWindow, type CellKey } from "~/diffraction/phases";
import { freeCellParameters } from "~/diffraction/window";
import { parseFormula } from "~/domain/formula";
import { GHS_CODES, SPECIAL_CATEGORY_CODES } from "~/domain/hazard-codes";
import { checkHStatement, splitHStatements } from "~/domain/hazards";
import { FileNameSchema } from "~/domain/storage-keys";
import { CURRENCIES, MAX_AMOUNT_MINOR, MAX_AMOUNT_TEXT, toMinorUnits } from "~/domain/money";

export const WIZARD_STEPS = [
  { slug: "samples", label: "Samples" },
  { slug: "hazards", label: "Hazards" },
  { slug: "measurement", label: "Measurement" },
  { slug: "labs", label: "Labs" },
  { slug: "review", label: "Review" },
] as const;
export type WizardStep = (typeof WIZARD_STEPS)[number]["slug"];

export const SAMPLE_FORMS = [
  { value: "powder", label: "Powder" },
  { value: "pellet", label: "Pressed pellet" },
  { value: "thin_film", label: "Thin film on substrate" },
  { value: "bulk", label: "Bulk piece" },
  { value: "capillary", label: "Sealed capillary" },
  { value: "slurry", label: "Slurry or paste" },
] as const;
export const TECHNIQUES = [
  { value: "powder_reflection", label: "Powder reflection" },
  { value: "powder_transmission", label: "Powder transmission" },
  { value: "thin_film", label: "Thin film" },
  { value: "single_crystal", label: "Single crystal" },
  { value: "total_scattering", label: "Total scattering" },
  { value: "neutron_powder", label: "Neutron powder" },
] as const;
export const SOURCES = ["any", "Cu", "Co", "Mo", "Cr", "Fe", "Ag"] as const;
export const ATMOSPHERES = ["air", "nitrogen", "argon", "vacuum", "reducing"] as const;
export const QUALITY_LEVELS = [
  { value: "screening", label: "Screening" },
  { value: "standard", label: "Standard" },
  { value: "high_resolution", label: "High resolution" },
] as const;

const values = <T extends readonly { value: string }[]>(list: T) => list.map((o) => o.value) as [T[number]["value"], ...T[number]["value"][]];

const text = (what: string, max: number) =>
  z
    .string({ error: `Enter ${what}.` })
    .trim()
    .min(1, `Enter ${what}.`)
    .max(max, `At most ${max} characters.`);
const positive = (what: string, unit: string) =>
  z.number({ error: `Enter ${what} as a number (${unit}).` }).positive(`${what[0].toUpperCase()}${what.slice(1)} must be positive.`);

// ───────────── Step 1: samples ─────────────

/** A sample declares at most this many further expected phases, and at most this many candidate forms. */
export const MAX_EXPECTED_PHASES = 4;
export const MAX_CANDIDATES = 4;
/** The widest acceptance window the wizard takes: ± 10 %, ± 1 Å on a length, ± 5° on an angle. */
export const WINDOW_MAX = { percent: 10, length: 1, angle: 5 } as const;

export const CELL_PARAMETER_LABELS: Record<CellKey, string> = { a: "a", b: "b", c: "c", alpha: "α", beta: "β", gamma: "γ" };
const isAngle = (key: CellKey) => key === "alpha" || key === "beta" || key === "gamma";

/** The crystal system, centering and approximate cell: the main phase's and each further phase's. */
const cellShape = {
  crystalSystem: z.enum(CRYSTAL_SYSTEMS as [CrystalSystem, ...CrystalSystem[]], { error: "Choose the crystal system." }),
  centering: z.enum(CENTERINGS as [Centering, ...Centering[]], { error: "Choose the lattice centering." }),
  cellA: positive("a", "Å"),
  cellB: positive("b", "Å"),
  cellC: positive("c", "Å"),
  cellAlpha: positive("alpha", "°"),
  cellBeta: positive("beta", "°"),
  cellGamma: positive("gamma", "°"),
};
type CellFields = { [K in keyof typeof cellShape]: z.infer<(typeof cellShape)[K]> };

// Runs once every field of the cell parsed; the sentence comes from the lattice engine's own check.
function checkCellFields(s: CellFields, ctx: z.RefinementCtx) {
  const centering = checkCentering(s.crystalSystem, s.centering);
  if (centering) ctx.addIssue({ code: "custom", path: ["centering"], message: centering });
  const cell = checkCellForSystem(s.crystalSystem, {
    a: s.cellA,
    b: s.cellB,
    c: s.cellC,
    alpha: s.cellAlpha,
    beta: s.cellBeta,
    gamma: s.cellGamma,
  });
  if (cell) ctx.addIssue({ code: "custom", path: ["cellA"], message: cell });
}

/** A further expected phase or a candidate form: an optional name, its system, centering and approximate cell. */
export const PhaseRowSchema = z
  .object({
    name: z.string().trim().max(80, "A phase name has at most 80 characters.").optional(),
    ...cellShape,
  })
  .superRefine(checkCellFields);
export type PhaseRow = z.infer<typeof PhaseRowSchema>;

/** One parameter's window as the form sends it; an empty amount means no window on that parameter. */
const windowEntry = (key: CellKey) =>
  z
    .object({
      plusMinus: z.number({ error: `Give the window on ${CELL_PARAMETER_LABELS[key]} as a number, e.g. 0.01.` }).optional(),
      unit: z.enum(["absolute", "percent"], { error: "Choose the window's unit." }).optional().default("absolute"),
    })
    .superRefine((w, ctx) => {
      if (w.plusMinus === undefined) return;
      const label = CELL_PARAMETER_LABELS[key];
      const problem =
        w.plusMinus <= 0
          ? `The window on ${label} must be a positive amount.`
          : w.unit === "percent" && w.plusMinus > WINDOW_MAX.percent
            ? `A window is at most ± ${WINDOW_MAX.percent} %.`
            : w.unit === "absolute" && !isAngle(key) && w.plusMinus > WINDOW_MAX.length
              ? `A window on a cell length is at most ± ${WINDOW_MAX.length} Å.`
              : w.unit === "absolute" && isAngle(key) && w.plusMinus > WINDOW_MAX.angle
                ? `A window on a cell angle is at most ± ${WINDOW_MAX.angle}°.`
                : null;
      if (problem) ctx.addIssue({ code: "custom", path: ["plusMinus"], message: problem });
    })
    .optional();

export const WindowSchema = z.object(Object.fromEntries(CELL_KEYS.map((k) => [k, windowEntry(k)])) as Record<CellKey, ReturnType<typeof windowEntry>>);
export type WindowInput = z.infer<typeof WindowSchema>;

/** The window as it is stored and the check takes it: the parameters given an amount; null when none is. */
export function acceptanceWindowOf(input: WindowInput | undefined): AcceptanceWindow | null {
  const window: AcceptanceWindow = {};
  for (const key of CELL_KEYS) {
    const entry = input?.[key];
    if (entry?.plusMinus !== undefined) window[key] = { plusMinus: entry.plusMinus, unit: entry.unit };
  }
  return Object.keys(window).length ? window : null;
}

/** What a sample declares (formula, form, mass, phases, window), as a sample and a material share it; checked by `checkDeclaration`. */
export const DeclarationFields = z.object({
  formula: text("the chemical formula", 200).superRefine((v, ctx) => {
    const parsed = parseFormula(v);
    if ("error" in parsed) ctx.addIssue({ code: "custom", message: parsed.error });
  }),
  form: z.enum(values(SAMPLE_FORMS), { error: "Choose the sample's form." }),
  massMg: positive("the mass", "mg").max(1_000_000, "At most 1 kg (1,000,000 mg)."),
  expectedPhase: text("the expected phase", 120),
  ...cellShape,
  phases: z.array(PhaseRowSchema).max(MAX_EXPECTED_PHASES, `At most ${MAX_EXPECTED_PHASES} further expected phases per sample.`).optional().default([]),
  candidates: z.array(PhaseRowSchema).max(MAX_CANDIDATES, `At most ${MAX_CANDIDATES} candidate forms per sample.`).optional().default([]),
  window: WindowSchema.optional(),
});

/** The checks across a declaration's fields: the cell against its system, and a window only on the free parameters. */
export function checkDeclaration(s: CellFields & { window?: WindowInput }, ctx: z.RefinementCtx) {
  checkCellFields(s, ctx);
  // A parameter the system fixes or ties to another (b = a of a tetragonal cell) has no window of its own (the form
  // does not offer one); the check refuses it too (app/diffraction/window.ts).
  const free = freeCellParameters(s.crystalSystem);
  for (const key of CELL_KEYS) {
    if (s.window?.[key]?.plusMinus === undefined || free.includes(key)) continue;
    ctx.addIssue({
      code: "custom",
      path: ["window", key, "plusMinus"],
      message: `A ${s.crystalSystem} cell's symmetry fixes ${CELL_PARAMETER_LABELS[key]}, so it takes no window; set one on ${free.map((k) => CELL_PARAMETER_LABELS[k]).join(", ")} instead.`,
    });
  }
}

export const SampleSchema = z
  .object({
    id: z.uuid().optional(),
    label: text("the sample's label", 80),
    /** A lot of a material: its lot code (the samples step shows it for samples made from a material). */
    lotCode: z.string().trim().max(80, "A lot code has at most 80 characters.").optional(),
    ...DeclarationFields.shape,
  })
  .superRefine(checkDeclaration);

export const SamplesStepSchema = z.object({
  title: text("a title for the request", 160),
  technique: z.enum(values(TECHNIQUES), { error: "Choose the technique." }),
  samples: z.array(SampleSchema, { error: "Add at least one sample." }).min(1, "Add at least one sample.").max(20, "At most 20 samples per request."),
});
export type SamplesStep = z.infer<typeof SamplesStepSchema>;

// ───────────── Step 2: hazards ─────────────

const SpecialEntry = z.object({
  declared: z.boolean().optional().default(false),
  details: z.string().trim().max(500, "At most 500 characters.").optional(),
  activityBq: z
    .number({ error: "Give the activity as a number of becquerels (Bq)." })
    .positive("The activity must be a positive number of becquerels.")
    .optional(),
});

const SpecialHazardsSchema = z
  .object(
    Object.fromEntries(SPECIAL_CATEGORY_CODES.map((c) => [c, SpecialEntry.optional()])) as Record<
      (typeof SPECIAL_CATEGORY_CODES)[number],
      z.ZodOptional<typeof SpecialEntry>
    >,
  )
  .superRefine((entries, ctx) => {
    for (const [category, entry] of Object.entries(entries)) {
      if (!entry?.declared) continue;
      if (!entry.details) ctx.addIssue({ code: "custom", path: [category, "details"], message: "Describe this hazard for the lab." });
      if (category === "radioactive" && entry.activityBq === undefined) {
        ctx.addIssue({ code: "custom", path: [category, "activityBq"], message: "A radioactive sample needs its activity in becquerels (Bq)." });
      }
    }
  });

/** A hazard declaration with its safety data sheet, as a sample and a material share it. */
export const HazardFields = z.object({
  ghs: z
    .array(z.enum(GHS_CODES, { error: "Choose pictograms from GHS01 to GHS09." }))
    .optional()
    .default([]),
  hStatements: z
    .string()
    .max(300, "At most 300 characters.")
    .optional()
    .transform((v, ctx) => {
      const codes = splitHStatements(v ?? "");
      for (const code of codes) {
        const problem = checkHStatement(code);
        if (problem) ctx.addIssue({ code: "custom", message: problem });
      }
      return [...new Set(codes)];
    }),
  special: SpecialHazardsSchema.optional().default({}),
  handlingNotes: z.string().trim().max(2000, "At most 2,000 characters.").optional(),
  afterMeasurement: z.enum(["return", "lab_disposes"], { error: "Say whether the sample comes back or the lab disposes of it." }),
  sdsStorageKey: z.string().max(400).optional(),
  sdsFileName: FileNameSchema.optional(),
  sdsSha256: z
    .string()
    .regex(/^[0-9a-f]{64}$/i, "The file's checksum is missing; upload it again.")
    .optional(),
});
export const SampleHazardSchema = z.object({
  id: z.uuid({ error: "This sample is not part of the request." }),
  ...HazardFields.shape,
});
export const HazardsStepSchema = z.object({ samples: z.array(SampleHazardSchema).min(1, "Add a sample first.") });
export type SampleHazardInput = z.infer<typeof SampleHazardSchema>;
/** A hazard declaration's form before parsing, as a sample and a material share it. */
export type HazardForm = z.input<typeof HazardFields>;
/** What the hazards form holds before parsing (H-statements are still one text). */
export type SampleHazardForm = z.input<typeof SampleHazardSchema>;

// ───────────── Step 3: measurement ─────────────

function todayIso() {
  return new Date().toISOString().slice(0, 10);
}

/** The ends of a measurement's range, as the measurement step and a material's usual measurement take them. */
export const RangeFields = z.object({
  rangeMin: z.number({ error: "Enter the lower end as a number." }).positive("The lower end must be positive."),
  rangeMax: z.number({ error: "Enter the upper end as a number." }).positive("The upper end must be positive."),
});

/** The upper end above the lower, and 2θ below 180°. */
export function checkRange(m: { rangeKind: string; rangeMin: number; rangeMax: number }, ctx: z.RefinementCtx) {
  if (m.rangeMin >= m.rangeMax) ctx.addIssue({ code: "custom", path: ["rangeMax"], message: "The upper end must be above the lower end." });
  if (m.rangeKind === "two_theta" && m.rangeMax >= 180) ctx.addIssue({ code: "custom", path: ["rangeMax"], message: "2θ lies below 180°." });
}

export const MeasurementStepSchema = z
  .object({
    rangeKind: z.enum(["two_theta", "d_spacing"], { error: "Choose 2θ or d-spacing." }),
    ...RangeFields.shape,
    preferredSource: z.enum(SOURCES, { error: "Choose a source or any." }),
    temperaturePoints: z
      .string()
      .max(300)
      .optional()
      .transform((v, ctx) => {
        const parts = (v ?? "").split(/[\s,;]+/).filter(Boolean);
        const points = parts.map(Number);
        const bad = parts.filter((p, i) => !Number.isFinite(points[i]) || points[i] <= 0 || points[i] > 3000);
        if (bad.length) ctx.addIssue({ code: "custom", message: `Temperatures are kelvin between 0 and 3000; “${bad.join(", ")}” is not.` });
        if (points.length > 20) ctx.addIssue({ code: "custom", message: "At most 20 temperature points." });
        return [...new Set(points)].sort((a, b) => a - b);
      }),
    atmosphere: z.enum(ATMOSPHERES, { error: "Choose the atmosphere." }),
    quality: z.enum(values(QUALITY_LEVELS), { error: "Choose the quality level." }),
    deadline: z.iso.date({ error: "Enter the deadline as a date." }).refine((d) => d > todayIso(), "The deadline must be in the future."),
    budget: z
      .string()
      .optional()
      .transform((v, ctx) => {
        if (!v?.trim()) return null;
        const minor = toMinorUnits(v);
        if (minor === null || minor <= 0) ctx.addIssue({ code: "custom", message: "Enter the budget as an amount such as 1200 or 1200.50." });
        else if (minor > MAX_AMOUNT_MINOR) ctx.addIssue({ code: "custom", message: `A budget is at most ${MAX_AMOUNT_TEXT}.` });
        return minor;
      }),
    currency: z.enum(CURRENCIES, { error: "Choose a currency." }),
  })
  .superRefine(checkRange);
export type MeasurementStep = z.infer<typeof MeasurementStepSchema>;

// ───────────── Step 4: labs ─────────────

export const LabsStepSchema = z
  .object({
    visibility: z.enum(["open", "invited"], { error: "Choose who may quote." }),
    invitedLabIds: z.array(z.uuid()).optional().default([]),
  })
  .refine((v) => v.visibility === "open" || v.invitedLabIds.length > 0, {
    path: ["invitedLabIds"],
    message: "Choose at least one lab to invite, or open the request to every matching lab.",
  });

/** The list-of-options enum values and the required-text field, for the other forms built from these pieces. */
export { text as requiredText, values as optionValues };
