// Instruments for the matching tests: a Cu reflection instrument with a hot stage and a Co one without stages.
import type { MatchInstrument, MatchRequest } from "~/domain/matching";

/** A Cu reflection instrument, 5–150° 2θ, powder, with a hot stage to 1473 K in air or nitrogen, and its Co twin without stages. */
export function cuAndCo(names: { cu: string; co: string }): { cu: MatchInstrument; co: MatchInstrument } {
  const cu: MatchInstrument = {
    id: "cu",
    name: names.cu,
    technique: "powder_reflection",
    anode: "Cu",
    customWavelength: null,
    twoThetaMin: 5,
    twoThetaMax: 150,
    energyDiscrimination: false,
    sampleForms: ["powder"],
    stages: [{ name: "Hot stage", minTemperatureK: 298, maxTemperatureK: 1473, atmospheres: ["air", "nitrogen"] }],
  };
  return { cu, co: { ...cu, id: "co", name: names.co, anode: "Co", stages: [] } };
}

/** An iron-rich sample (LiFePO4) in reflection over 10–90° 2θ, any source, room temperature in air. */
export const IRON_RICH: MatchRequest = {
  technique: "powder_reflection",
  rangeKind: "two_theta",
  rangeMin: 10,
  rangeMax: 90,
  preferredSource: "any",
  temperaturePointsK: [],
  atmosphere: "air",
  samples: [{ label: "LFP", elements: ["Li", "Fe", "P", "O"], form: "powder", ghsPictograms: [], specialHazards: [] }],
};
