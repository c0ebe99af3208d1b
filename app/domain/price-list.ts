// The price-list form: amounts typed in major units ("180.00"), checked and turned into integer minor units.
import { z } from "zod";
import { TECHNIQUE_LABELS, TECHNIQUES, type Technique } from "~/domain/capabilities";
import { CURRENCIES, MAX_AMOUNT_MINOR, MAX_AMOUNT_TEXT, toMajorText, toMinorUnits } from "~/domain/money";
import type { PriceTiers } from "~/domain/price-tiers";
import { CLIENT_KIND_LABELS, CLIENT_KINDS, type ClientKind } from "~/domain/profile-forms";

/** An amount in major units; `positive` refuses 0 as well as negative values. */
function amount(what: string, { positive }: { positive: boolean }) {
  return z
    .string({ error: `Enter ${what}, e.g. 180.00.` })
    .trim()
    .transform((text, ctx) => {
      if (text.startsWith("-")) {
        ctx.issues.push({ code: "custom", input: text, message: "Prices cannot be negative." });
        return z.NEVER;
      }
      const minor = toMinorUnits(text);
      if (minor === null) {
        ctx.issues.push({ code: "custom", input: text, message: "Write an amount like 180.00 (digits, at most two decimals)." });
        return z.NEVER;
      }
      if (minor > MAX_AMOUNT_MINOR) {
        ctx.issues.push({ code: "custom", input: text, message: `${what[0].toUpperCase()}${what.slice(1)} is at most ${MAX_AMOUNT_TEXT}.` });
        return z.NEVER;
      }
      if (positive && minor === 0) {
        ctx.issues.push({ code: "custom", input: text, message: `${what[0].toUpperCase()}${what.slice(1)} must be more than 0.` });
        return z.NEVER;
      }
      return minor;
    });
}

const perSample = z.object(
  Object.fromEntries(TECHNIQUES.map((t) => [t, amount("the price per sample", { positive: true }).optional()])) as Record<
    Technique,
    z.ZodOptional<ReturnType<typeof amount>>
  >,
);

/** A client kind's own prices (docs/design.md#price-tiers): every field may stay empty, falling back to the base list. */
const tier = (kind: ClientKind) => {
  const word = CLIENT_KIND_LABELS[kind].toLowerCase();
  return z
    .object({
      perSample: z
        .object(
          Object.fromEntries(TECHNIQUES.map((t) => [t, amount(`the ${word} price per sample`, { positive: true }).optional()])) as Record<
            Technique,
            z.ZodOptional<ReturnType<typeof amount>>
          >,
        )
        .optional(),
      perInstrumentHour: amount(`the ${word} price per instrument hour`, { positive: false }).optional(),
    })
    .optional();
};

export const PriceListSchema = z
  .object({
    currency: z.enum(CURRENCIES, { error: "Choose a currency from the list." }),
    perSample,
    perExtraTemperaturePoint: amount("the price per extra temperature point (0 for none)", { positive: false }),
    perInstrumentHour: amount("the price per instrument hour (0 for none)", { positive: false }),
    samplePreparation: amount("the sample-preparation fee (0 for none)", { positive: false }),
    hazardousHandling: amount("the hazardous-handling fee (0 for none)", { positive: false }),
    rushMultiplier: z
      .number({ error: "Enter the rush multiplier as a number, e.g. 1.5." })
      .min(1, "A rush multiplier is at least 1 (no surcharge).")
      .max(5, "At most 5 times the normal price.")
      .refine((v) => Math.abs(v * 100 - Math.round(v * 100)) < 1e-9, "At most two decimals."),
    turnaroundDays: z.number({ error: "Enter the turnaround in days." }).int("Whole days only.").min(1, "At least 1 day.").max(365, "At most 365 days."),
    tiers: z.object(Object.fromEntries(CLIENT_KINDS.map((k) => [k, tier(k)])) as Record<ClientKind, ReturnType<typeof tier>>).optional(),
  })
  .refine((v) => Object.values(v.perSample).some((p) => p !== undefined), {
    path: ["perSample"],
    message: "Give a per-sample price for at least one technique.",
  })
  .superRefine((v, ctx) => {
    // A tier changes the price of what the lab offers; it cannot offer a technique the base list leaves out.
    for (const kind of CLIENT_KINDS) {
      for (const t of TECHNIQUES) {
        if (v.tiers?.[kind]?.perSample?.[t] !== undefined && v.perSample[t] === undefined) {
          ctx.addIssue({
            code: "custom",
            path: ["tiers", kind, "perSample", t],
            message: `Give a base price for ${TECHNIQUE_LABELS[t].toLowerCase()} first; the ${CLIENT_KIND_LABELS[kind].toLowerCase()} prices only change techniques you offer.`,
          });
        }
      }
    }
  });
export type PriceListInput = z.infer<typeof PriceListSchema>;

/** The form's tiers as stored: minor units, empty fields and empty tiers left out. */
export function tiersFromInput(input: PriceListInput["tiers"]): PriceTiers {
  const out: PriceTiers = {};
  for (const kind of CLIENT_KINDS) {
    const t = input?.[kind];
    if (!t) continue;
    const perSampleMinor = Object.fromEntries(Object.entries(t.perSample ?? {}).filter(([, v]) => v !== undefined)) as Record<string, number>;
    const tier: PriceTiers[ClientKind] = {};
    if (Object.keys(perSampleMinor).length) tier.perSampleMinor = perSampleMinor;
    if (t.perInstrumentHour !== undefined) tier.perInstrumentHourMinor = t.perInstrumentHour;
    if (Object.keys(tier).length) out[kind] = tier;
  }
  return out;
}

/** Stored tiers back as the form's text in major units (empty where the tier falls back to the base list). */
export function tiersToForm(tiers: PriceTiers | null | undefined) {
  return Object.fromEntries(
    CLIENT_KINDS.map((kind) => {
      const t = tiers?.[kind];
      return [
        kind,
        {
          perSample: Object.fromEntries(Object.entries(t?.perSampleMinor ?? {}).map(([tech, v]) => [tech, v === undefined ? "" : toMajorText(v)])),
          perInstrumentHour: t?.perInstrumentHourMinor === undefined ? "" : toMajorText(t.perInstrumentHourMinor),
        },
      ];
    }),
  ) as Record<ClientKind, { perSample: Record<string, string>; perInstrumentHour: string }>;
}
