// What a lab's instruments can do: the vocabularies of docs/design.md#instruments-and-capabilities and the validated forms of the capabilities editor.
import { z } from "zod";
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
  });
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
