// The price-list form: amounts typed in major units ("180.00"), checked and turned into integer minor units.
import { z } from "zod";
import { TECHNIQUES, type Technique } from "~/domain/capabilities";
import { CURRENCIES, MAX_AMOUNT_MINOR, MAX_AMOUNT_TEXT, toMinorUnits } from "~/domain/money";

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
  })
  .refine((v) => Object.values(v.perSample).some((p) => p !== undefined), {
    path: ["perSample"],
    message: "Give a per-sample price for at least one technique.",
  });
export type PriceListInput = z.infer<typeof PriceListSchema>;
