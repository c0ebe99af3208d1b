// A client's material as its form takes it (docs/design.md#materials-and-lots): the product code and name, the
// declaration a sample makes (formula, form, mass, phases, window), the usual measurement and the hazards with the
// safety data sheet. Built from the request wizard's own pieces, so a material and a sample are checked alike.
import { z } from "zod";
import {
  checkDeclaration,
  checkRange,
  DeclarationFields,
  HazardFields,
  type HazardForm,
  optionValues,
  QUALITY_LEVELS,
  RangeFields,
  requiredText,
  SOURCES,
  TECHNIQUES,
} from "~/domain/request-forms";

/** At most this many lot codes in one request made from a material (a request takes at most 20 samples). */
export const MAX_LOTS_PER_REQUEST = 20;

export const MaterialSchema = z
  .object({
    productCode: requiredText("the product code", 40).regex(/^[\p{L}\p{N}][\p{L}\p{N} ._/-]*$/u, "A product code is letters, digits, spaces and . _ / - only."),
    name: requiredText("the material's name", 120),
    ...DeclarationFields.shape,
    technique: z.enum(optionValues(TECHNIQUES), { error: "Choose the technique." }),
    rangeKind: z.literal("two_theta").optional().default("two_theta"),
    ...RangeFields.shape,
    quality: z.enum(optionValues(QUALITY_LEVELS), { error: "Choose the quality level." }),
    preferredSource: z.enum(SOURCES, { error: "Choose a source or any." }),
    ...HazardFields.shape,
    qcUserIds: z
      .array(z.uuid({ error: "Choose QC people from the organisation's members." }))
      .max(20, "At most 20 QC people.")
      .optional()
      .default([]),
  })
  .superRefine((m, ctx) => {
    checkDeclaration(m, ctx);
    checkRange(m, ctx);
  });
export type MaterialInput = z.infer<typeof MaterialSchema>;
/** What the material's form holds before parsing: the hazard fields as the hazards form holds them. */
export type MaterialForm = Omit<MaterialInput, keyof HazardForm> & HazardForm;

/** Lot codes as the client types them: one per line or separated by commas; each at most 80 characters. */
export const LotCodesSchema = z.object({
  lotCodes: z
    .string({ error: "Enter the lot code of each lot to measure." })
    .max(4000)
    .transform((v, ctx) => {
      const codes = [
        ...new Set(
          v
            .split(/[\n,;]+/)
            .map((c) => c.trim())
            .filter(Boolean),
        ),
      ];
      if (codes.length === 0) ctx.addIssue({ code: "custom", message: "Enter the lot code of each lot to measure." });
      else if (codes.length > MAX_LOTS_PER_REQUEST) ctx.addIssue({ code: "custom", message: `At most ${MAX_LOTS_PER_REQUEST} lots in one request.` });
      const long = codes.find((c) => c.length > 80);
      if (long) ctx.addIssue({ code: "custom", message: `A lot code has at most 80 characters; “${long.slice(0, 20)}…” is longer.` });
      return codes;
    }),
});
