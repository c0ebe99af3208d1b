// What a lab's instruments can do: the vocabularies of docs/design.md#instruments-and-capabilities and the validated forms of the capabilities editor.
import { z } from "zod";
import { SAMPLE_HOLDER_IDS, SAMPLE_HOLDERS, type SampleHolder } from "~/diffraction/holders";
import { ANODE_LINES, type Anode, type Monochromation } from "~/diffraction/wavelengths";
import { SPECIAL_CATEGORY_CODES, GHS_CODES } from "~/domain/hazard-codes";

export const TECHNIQUES = ["powder_reflection", "powder_transmission", "thin_film", "single_crystal", "total_scattering", "neutron_powder"] as const;
export type Technique = (typeof TECHNIQUES)[number];
export const TECHNIQUE_LABELS: Record<Technique, string> = {
  powder_reflection: "Powder, reflection",
  powder_transmission: "Powder, transmission",
  thin_film: "Thin film",
  single_crystal: "Single crystal",
  total_scattering: "Total scattering",
  neutron_powder: "Neutron powder",
};

export const ANODE_CHOICES = ["Cu", "Co", "Mo", "Cr", "Fe", "Ag"] as const satisfies readonly Anode[];
export const MONOCHROMATION_CHOICES = ["k_alpha_doublet", "k_alpha1_only", "k_beta_filtered"] as const satisfies readonly Monochromation[];
export const MONOCHROMATION_LABELS: Record<Monochromation, string> = {
  k_alpha_doublet: "Kα1 + Kα2 doublet",
  k_alpha1_only: "Kα1 only (primary monochromator)",
  k_beta_filtered: "Kβ filter (Kα doublet remains)",
};

export const MONOCHROMATION_OPTIONS = MONOCHROMATION_CHOICES.map((m) => ({ value: m, label: MONOCHROMATION_LABELS[m] }));

export const DETECTOR_KINDS = ["point", "strip_1d", "area_2d"] as const;
export const DETECTOR_LABELS: Record<(typeof DETECTOR_KINDS)[number], string> = {
  point: "Point detector",
  strip_1d: "1D strip detector",
  area_2d: "2D area detector",
};

/** Sample forms an instrument takes; the same values as a request's samples. */
export const SAMPLE_FORMS = ["powder", "pellet", "thin_film", "bulk", "capillary", "slurry"] as const;
export const SAMPLE_FORM_LABELS: Record<(typeof SAMPLE_FORMS)[number], string> = {
  powder: "Powder",
  pellet: "Pressed pellet",
  thin_film: "Thin film on substrate",
  bulk: "Bulk piece",
  capillary: "Sealed capillary",
  slurry: "Slurry or paste",
};

/**
 * The sample holders a lab may name for an instrument: the engine's list (its own lines are then labelled, not
 * counted as the sample's). "none" is "not stated" and is kept as no holder.
 */
export const SAMPLE_HOLDER_OPTIONS = SAMPLE_HOLDERS.map((h) => ({ value: h.id, label: h.label }));

export const ATMOSPHERES = ["air", "nitrogen", "argon", "vacuum", "reducing"] as const;
export const ATMOSPHERE_LABELS: Record<(typeof ATMOSPHERES)[number], string> = {
  air: "Air",
  nitrogen: "Nitrogen",
  argon: "Argon",
  vacuum: "Vacuum",
  reducing: "Reducing gas",
};

/** The wavelength (Å) an instrument's d-spacings are computed with: the anode's Kα1, or its custom wavelength. */
export function instrumentWavelength(i: { anode: Anode | null; customWavelength: number | null }): number | null {
  if (i.anode) return ANODE_LINES[i.anode].kAlpha1;
  return i.customWavelength ?? null;
}

const finite = (v: unknown): v is number => typeof v === "number" && Number.isFinite(v);
const num = (what: string) => z.number({ error: `Enter ${what} as a number.` });

/** Caglioti U, V and W of a laboratory diffractometer are of order 10⁻³ degrees² (common practice); beyond this the units are wrong. */
export const PROFILE_LIMIT = 1;
const RAD = Math.PI / 180;

/** The instrumental FWHM² (degrees² 2θ) at a 2θ by Caglioti's formula: U tan²θ + V tanθ + W. */
export function cagliotiFwhmSquared(p: { U: number; V: number; W: number }, twoTheta: number) {
  const t = Math.tan((twoTheta * RAD) / 2);
  return p.U * t * t + p.V * t + p.W;
}

/**
 * The first 2θ in [from, to] where U, V, W give no real peak width (FWHM² ≤ 0), or null. The quadratic in
 * tan θ has its lowest value at tan θ = −V/(2U), so that point is tried besides a fine grid.
 */
export function profileFailsAt(p: { U: number; V: number; W: number }, from: number, to: number): number | null {
  const angles = Array.from({ length: 361 }, (_, i) => from + ((to - from) * i) / 360);
  if (p.U > 0) {
    const vertex = (2 * Math.atan(-p.V / (2 * p.U))) / RAD;
    if (vertex > from && vertex < to) angles.push(vertex);
  }
  const bad = angles.filter((a) => !(cagliotiFwhmSquared(p, a) > 0)).sort((a, b) => a - b);
  return bad.length ? bad[0] : null;
}

const PROFILE_KEYS = ["cagliotiU", "cagliotiV", "cagliotiW"] as const;
const profileNumber = (letter: string) =>
  num(`Caglioti ${letter} in degrees²`)
    .min(-PROFILE_LIMIT, `Caglioti ${letter} lies between −${PROFILE_LIMIT} and ${PROFILE_LIMIT} degrees²; check the units (degrees² 2θ, not centidegrees²).`)
    .max(PROFILE_LIMIT, `Caglioti ${letter} lies between −${PROFILE_LIMIT} and ${PROFILE_LIMIT} degrees²; check the units (degrees² 2θ, not centidegrees²).`)
    .optional();
const twoTheta = (what: string) => num(what).min(0, "2θ lies between 0° and 180°.").max(180, "2θ lies between 0° and 180°.");

export const InstrumentSchema = z
  .object({
    id: z.uuid().optional(),
    name: z.string({ error: "Name the instrument." }).trim().min(2, "Name the instrument (at least 2 characters).").max(120, "At most 120 characters."),
    technique: z.enum(TECHNIQUES, { error: "Choose a technique from the list." }),
    sourceKind: z.enum(["anode", "custom"], { error: "Choose an anode or a custom wavelength." }),
    anode: z.enum(ANODE_CHOICES, { error: "Choose an anode from the list." }).optional(),
    customWavelength: num("the wavelength in Å").gt(0, "The wavelength must be more than 0 Å.").max(20, "A diffraction wavelength is below 20 Å.").optional(),
    monochromation: z.enum(MONOCHROMATION_CHOICES, { error: "Choose how the beam is monochromated." }),
    twoThetaMin: twoTheta("the smallest 2θ in degrees"),
    twoThetaMax: twoTheta("the largest 2θ in degrees"),
    smallestStep: num("the smallest step in degrees").gt(0, "The step must be more than 0°.").max(5, "A step above 5° 2θ cannot resolve peaks."),
    detector: z.enum(DETECTOR_KINDS, { error: "Choose a detector kind." }),
    energyDiscrimination: z.boolean().default(false),
    sampleForms: z.array(z.enum(SAMPLE_FORMS, { error: "Choose sample forms from the list." })).min(1, "Tick at least one sample form."),
    sampleHolder: z.enum(SAMPLE_HOLDER_IDS as [SampleHolder, ...SampleHolder[]], { error: "Choose a sample holder from the list." }).optional(),
    cagliotiU: profileNumber("U"),
    cagliotiV: profileNumber("V"),
    cagliotiW: profileNumber("W"),
  })
  // Cross-field checks run even when another field failed, so every problem shows at once.
  .refine((v) => v.twoThetaMin < v.twoThetaMax, {
    path: ["twoThetaMax"],
    message: "The largest 2θ must be above the smallest.",
    when: (p) => {
      const v = p.value as { twoThetaMin?: unknown; twoThetaMax?: unknown };
      return finite(v?.twoThetaMin) && finite(v?.twoThetaMax) && v.twoThetaMax <= 180 && v.twoThetaMin >= 0;
    },
  })
  .refine((v) => v.sourceKind !== "anode" || !!v.anode, {
    path: ["anode"],
    message: "Choose the anode.",
    when: (p) => (p.value as { sourceKind?: unknown })?.sourceKind === "anode",
  })
  .refine((v) => v.sourceKind !== "custom" || v.customWavelength !== undefined, {
    path: ["customWavelength"],
    message: "Enter the wavelength in Å.",
    when: (p) => (p.value as { sourceKind?: unknown })?.sourceKind === "custom",
  })
  // U, V, W go together, and must give a real peak width over the instrument's whole 2θ range.
  .superRefine(
    (v, ctx) => {
      const given = PROFILE_KEYS.filter((k) => v[k] !== undefined);
      if (given.length === 0) return;
      if (given.length < 3) {
        for (const k of PROFILE_KEYS.filter((key) => v[key] === undefined)) {
          ctx.addIssue({ code: "custom", path: [k], message: "Give all three of U, V and W, or leave all three empty." });
        }
        return;
      }
      const profile = { U: v.cagliotiU!, V: v.cagliotiV!, W: v.cagliotiW! };
      const failsAt = profileFailsAt(profile, v.twoThetaMin, v.twoThetaMax);
      if (failsAt !== null) {
        ctx.addIssue({
          code: "custom",
          path: ["cagliotiW"],
          message: `With these U, V and W the peak width would not be real at ${+failsAt.toFixed(1)}° 2θ (U tan²θ + V tanθ + W must stay above 0); check the signs.`,
        });
      }
    },
    {
      when: (p) => {
        const v = p.value as Record<string, unknown>;
        const profileOk = PROFILE_KEYS.every((k) => v?.[k] === undefined || (finite(v[k]) && Math.abs(v[k] as number) <= PROFILE_LIMIT));
        const rangeOk = finite(v?.twoThetaMin) && finite(v?.twoThetaMax) && v.twoThetaMin >= 0 && v.twoThetaMax <= 180 && v.twoThetaMin < v.twoThetaMax;
        return profileOk && (rangeOk || PROFILE_KEYS.some((k) => v?.[k] === undefined));
      },
    },
  );
export type InstrumentInput = z.infer<typeof InstrumentSchema>;

export const StageSchema = z
  .object({
    id: z.uuid().optional(),
    instrumentId: z.uuid({ error: "Choose the instrument." }),
    name: z.string({ error: "Name the stage." }).trim().min(2, "Name the stage (at least 2 characters).").max(120, "At most 120 characters."),
    minTemperatureK: num("the lowest temperature in K").gt(0, "Temperatures in kelvin are above 0 K.").max(5000, "At most 5000 K."),
    maxTemperatureK: num("the highest temperature in K").gt(0, "Temperatures in kelvin are above 0 K.").max(5000, "At most 5000 K."),
    atmospheres: z.array(z.enum(ATMOSPHERES, { error: "Choose atmospheres from the list." })).min(1, "Tick at least one atmosphere."),
  })
  .refine((v) => v.minTemperatureK < v.maxTemperatureK, {
    path: ["maxTemperatureK"],
    message: "The highest temperature must be above the lowest.",
    when: (p) => {
      const v = p.value as { minTemperatureK?: unknown; maxTemperatureK?: unknown };
      return finite(v?.minTemperatureK) && finite(v?.maxTemperatureK) && v.minTemperatureK > 0 && v.maxTemperatureK > 0;
    },
  });
export type StageInput = z.infer<typeof StageSchema>;

export const HazardAcceptanceSchema = z.object({
  pictograms: z.array(z.enum(GHS_CODES, { error: "Choose GHS pictograms from the list." })).default([]),
  specialCategories: z.array(z.enum(SPECIAL_CATEGORY_CODES, { error: "Choose categories from the list." })).default([]),
});

export const RemoveSchema = z.object({ id: z.uuid({ error: "Choose what to remove." }) });

/** Saving the calibration scan's fitted U, V, W on an instrument: only which instrument (the numbers are the stored fit). */
export const CalibrationProfileSchema = z.object({ instrumentId: z.uuid({ error: "Choose the instrument to save the profile on." }) });
