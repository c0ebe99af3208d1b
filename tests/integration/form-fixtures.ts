// Valid form fields the integration tests start from and spoil one field at a time.

/** One orthorhombic LiFePO4 sample of the request wizard's samples step. */
export const SAMPLE_FIELDS = {
  "samples[0].label": "LFP-12",
  "samples[0].formula": "LiFePO4",
  "samples[0].form": "powder",
  "samples[0].massMg": "400",
  "samples[0].expectedPhase": "olivine LiFePO4",
  "samples[0].crystalSystem": "orthorhombic",
  "samples[0].centering": "P",
  "samples[0].cellA": "10.33",
  "samples[0].cellB": "6.01",
  "samples[0].cellC": "4.69",
  "samples[0].cellAlpha": "90",
  "samples[0].cellBeta": "90",
  "samples[0].cellGamma": "90",
};

/** A Cu-anode reflection instrument of the capabilities editor (sample forms are added by the caller). */
export const INSTRUMENT_FIELDS = {
  intent: "save-instrument",
  technique: "powder_reflection",
  sourceKind: "anode",
  anode: "Cu",
  monochromation: "k_alpha_doublet",
  twoThetaMin: "5",
  twoThetaMax: "150",
  smallestStep: "0.01",
  detector: "strip_1d",
};
