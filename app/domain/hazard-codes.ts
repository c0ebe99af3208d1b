// The hazard vocabularies labs accept and clients declare: UN GHS pictograms and Diffractory's special categories.

/** UN GHS pictograms with their names and what they cover (docs/reference-values.md#hazard-vocabularies). */
export const GHS_PICTOGRAMS = [
  { code: "GHS01", name: "Exploding bomb", covers: "explosives, self-reactives, organic peroxides" },
  { code: "GHS02", name: "Flame", covers: "flammables, pyrophorics, self-heating, water-reactive" },
  { code: "GHS03", name: "Flame over circle", covers: "oxidisers" },
  { code: "GHS04", name: "Gas cylinder", covers: "gases under pressure" },
  { code: "GHS05", name: "Corrosion", covers: "corrosive to metals, skin or eyes" },
  { code: "GHS06", name: "Skull and crossbones", covers: "acute toxicity, categories 1–3" },
  { code: "GHS07", name: "Exclamation mark", covers: "acute toxicity 4, irritants, sensitisers" },
  { code: "GHS08", name: "Health hazard", covers: "carcinogens, mutagens, reproductive and target-organ toxicity" },
  { code: "GHS09", name: "Environment", covers: "hazardous to the aquatic environment" },
] as const;

export type GhsCode = (typeof GHS_PICTOGRAMS)[number]["code"];
export const GHS_CODES = GHS_PICTOGRAMS.map((p) => p.code) as [GhsCode, ...GhsCode[]];

export function ghsName(code: string) {
  return GHS_PICTOGRAMS.find((p) => p.code === code)?.name ?? code;
}

/** Hazards outside GHS that a lab must accept explicitly (docs/design.md#hazard-declarations). */
export const SPECIAL_CATEGORIES = [
  { code: "radioactive", label: "Radioactive" },
  { code: "beryllium", label: "Beryllium-containing" },
  { code: "nanomaterial", label: "Nanomaterial" },
  { code: "biological", label: "Biological" },
  { code: "air_sensitive", label: "Air-sensitive" },
  { code: "pyrophoric", label: "Pyrophoric" },
  { code: "export_controlled", label: "Export-controlled" },
] as const;

export type SpecialCategory = (typeof SPECIAL_CATEGORIES)[number]["code"];
export const SPECIAL_CATEGORY_CODES = SPECIAL_CATEGORIES.map((c) => c.code) as [SpecialCategory, ...SpecialCategory[]];
