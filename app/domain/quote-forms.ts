// The quote builder's form: editable line items in major units, validity, turnaround, instrument, notes.
import { z } from "zod";
import { toMinorUnits } from "~/domain/money";

function todayIso() {
  return new Date().toISOString().slice(0, 10);
}

export const QuoteLineSchema = z.object({
  description: z.string({ error: "Describe the item." }).trim().min(1, "Describe the item.").max(200, "At most 200 characters."),
  quantity: z
    .number({ error: "Enter the quantity as a whole number." })
    .int("Enter the quantity as a whole number.")
    .min(1, "The quantity is at least 1.")
    .max(1000, "At most 1,000."),
  unitPrice: z.string({ error: "Enter the unit price, e.g. 180.00." }).transform((v, ctx) => {
    const minor = toMinorUnits(v);
    if (minor === null) ctx.addIssue({ code: "custom", message: "Enter the unit price as an amount such as 180 or 180.50." });
    return minor ?? 0;
  }),
});

/** There is deliberately no total field: the server adds the items up itself. */
export const QuoteSchema = z.object({
  items: z.array(QuoteLineSchema, { error: "Add at least one line item." }).min(1, "Add at least one line item.").max(30, "At most 30 line items."),
  validUntil: z.iso.date({ error: "Enter the date the quote is valid until." }).refine((d) => d >= todayIso(), "The quote must be valid until today or later."),
  turnaroundDays: z.number({ error: "Enter the turnaround in days." }).int("Enter whole days.").min(1, "At least one day.").max(365, "At most 365 days."),
  instrumentId: z.uuid({ error: "Choose the instrument." }),
  notes: z.string().trim().max(2000, "At most 2,000 characters.").optional(),
});
export type QuoteInput = z.infer<typeof QuoteSchema>;
