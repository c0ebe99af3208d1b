// Can this lab do this request? The matching rules of docs/design.md#matching as pure functions, with reasons in words.
import { ANODE_LINES, K_EDGE_KEV, photonEnergyKeV, type Anode } from "~/diffraction/wavelengths";
import { dSpacingCoverage, qMax } from "~/domain/coverage";
import type { PriceTiers } from "~/domain/price-tiers";
import { withdrawalReason } from "~/domain/calibration-record";

export interface MatchStage {
  name: string;
  minTemperatureK: number;
  maxTemperatureK: number;
  atmospheres: string[];
}

export interface MatchInstrument {
  id: string;
  name: string;
  technique: string;
  anode: Anode | null;
  customWavelength: number | null;
  twoThetaMin: number;
  twoThetaMax: number;
  energyDiscrimination: boolean;
  sampleForms: string[];
  stages: MatchStage[];
  /** The instrument's calibration state (docs/design.md#calibration-on-record); overdue or out of control does not count for matching. */
  calibrationState?: string;
}

export interface MatchPriceList {
  currency: string;
  perSampleMinor: Partial<Record<string, number>>;
  perExtraTemperaturePointMinor: number;
  hazardousHandlingMinor: number;
  samplePreparationMinor: number;
  turnaroundDays: number;
  perInstrumentHourMinor?: number;
  /** The lab's prices by client kind (docs/design.md#price-tiers), for showing; estimates use the list as given. */
  tiers?: PriceTiers;
}

export interface MatchLab {
  id: string;
  name: string;
  slug: string;
  instruments: MatchInstrument[];
  acceptance: { pictograms: string[]; specialCategories: string[] };
  priceList: MatchPriceList | null;
}

export interface MatchSample {
  label: string;
  elements: string[];
  form: string;
  ghsPictograms: string[];
  specialHazards: { category: string }[];
}

export interface MatchRequest {
  technique: string;
  rangeKind: string;
  rangeMin: number | null;
  rangeMax: number | null;
  preferredSource: string;
  temperaturePointsK: number[];
  atmosphere: string;
  samples: MatchSample[];
}

export interface Reason {
  ok: boolean;
  text: string;
}

export interface InstrumentFit {
  instrument: MatchInstrument;
  fits: boolean;
  reasons: Reason[];
  warnings: string[];
}

export interface LabMatch {
  labId: string;
  labName: string;
  labSlug: string;
  fits: boolean;
  reasons: Reason[];
  /** Fluorescence and similar warnings of the fitting instruments, each prefixed with the instrument's name. */
  warnings: string[];
  instruments: { instrumentId: string; name: string; source: string; fits: boolean; reasons: Reason[]; warnings: string[] }[];
  bestInstrumentId: string | null;
  instrumentName: string | null;
  source: string | null;
  estimatedPriceMinor: number | null;
  currency: string | null;
  turnaroundDays: number | null;
}

/** A measurement at room temperature in air needs no stage (common practice: 293–303 K counts as ambient). */
export const AMBIENT_K: [number, number] = [293, 303];
/**
 * An element fluoresces under a source when its K edge lies below the source's Kα1 energy; the effect is
 * strong when the edge is close below (iron 7.112 keV under copper 8.048 keV). Edges more than 2.5 keV
 * below the line are not flagged (common practice: absorption falls roughly as E⁻³ above an edge and the
 * soft fluorescence of light elements is mostly absorbed in air).
 */
export const FLUORESCENCE_WINDOW_KEV = 2.5;

export function instrumentWavelength(i: Pick<MatchInstrument, "anode" | "customWavelength">): number | null {
  if (i.anode) return ANODE_LINES[i.anode].kAlpha1;
  return i.customWavelength ?? null;
}

export function sourceLabel(i: Pick<MatchInstrument, "anode" | "customWavelength" | "technique">) {
  if (i.anode) return `${i.anode} Kα`;
  if (i.customWavelength) return `${i.technique === "neutron_powder" ? "neutrons" : "custom"} λ = ${i.customWavelength} Å`;
  return "unknown source";
}

/** Elements of the samples that fluoresce under this wavelength (edge within the window below the line). */
export function fluorescingElements(elements: Iterable<string>, wavelength: number): string[] {
  const line = photonEnergyKeV(wavelength);
  const out = new Set<string>();
  for (const el of elements) {
    const edge = K_EDGE_KEV[el];
    if (edge !== undefined && edge < line && line - edge <= FLUORESCENCE_WINDOW_KEV) out.add(el);
  }
  return [...out].sort();
}

const fmt = (x: number, digits = 3) => (Number.isFinite(x) ? x.toFixed(digits) : "∞");

/** The d range (Å) the request needs; a 2θ range is read for its preferred source (Cu Kα1 when any). */
export function requestedDRange(req: Pick<MatchRequest, "rangeKind" | "rangeMin" | "rangeMax" | "preferredSource">) {
  if (req.rangeMin === null || req.rangeMax === null) return null;
  if (req.rangeKind === "d_spacing") return { dMin: Math.min(req.rangeMin, req.rangeMax), dMax: Math.max(req.rangeMin, req.rangeMax) };
  const anode = (req.preferredSource in ANODE_LINES ? req.preferredSource : "Cu") as Anode;
  return dSpacingCoverage(ANODE_LINES[anode].kAlpha1, req.rangeMin, req.rangeMax);
}

export function evaluateInstrument(req: MatchRequest, inst: MatchInstrument): InstrumentFit {
  const reasons: Reason[] = [];
  const warnings: string[] = [];
  const add = (ok: boolean, text: string) => reasons.push({ ok, text });

  const withdrawn = withdrawalReason(inst.calibrationState);
  if (withdrawn) add(false, withdrawn);
  add(
    inst.technique === req.technique,
    inst.technique === req.technique ? `Technique ${labelOf(inst.technique)}` : `Technique is ${labelOf(inst.technique)}, not ${labelOf(req.technique)}`,
  );

  if (req.preferredSource !== "any") {
    const ok = inst.anode === req.preferredSource;
    add(ok, ok ? `${req.preferredSource} source as preferred` : `Source is ${sourceLabel(inst)}, not the preferred ${req.preferredSource}`);
  }

  const wavelength = instrumentWavelength(inst);
  if (wavelength === null) {
    add(false, "The instrument's wavelength is not stated");
  } else {
    const cover = dSpacingCoverage(wavelength, inst.twoThetaMin, inst.twoThetaMax);
    const need = requestedDRange(req);
    if (need) {
      const ok = cover.dMin <= need.dMin * (1 + 1e-9) && cover.dMax >= need.dMax * (1 - 1e-9);
      add(ok, `${ok ? "Covers" : "Does not cover"} d ${fmt(need.dMin)}–${fmt(need.dMax, 2)} Å (instrument reaches ${fmt(cover.dMin)}–${fmt(cover.dMax, 2)} Å)`);
    } else {
      add(true, `Reaches d down to ${fmt(cover.dMin)} Å`);
    }
    if (req.technique === "total_scattering") add(true, `Q_max = ${qMax(wavelength, inst.twoThetaMax).toFixed(1)} Å⁻¹`);
    if (!inst.energyDiscrimination && inst.technique !== "neutron_powder") {
      const elements = req.samples.flatMap((s) => s.elements);
      const glowing = fluorescingElements(elements, wavelength);
      if (glowing.length > 0) {
        warnings.push(
          `Fluorescence: ${glowing.join(", ")} ${glowing.length > 1 ? "have K edges" : "has its K edge"} just below the ${sourceLabel(inst)} energy (${photonEnergyKeV(wavelength).toFixed(3)} keV) and the detector has no energy discrimination — expect a high background.`,
        );
      }
    }
  }

  const points = req.temperaturePointsK.length > 0 ? req.temperaturePointsK : [298];
  const ambientAir = req.atmosphere === "air" && points.every((t) => t >= AMBIENT_K[0] && t <= AMBIENT_K[1]);
  if (!ambientAir) {
    const missing = points.filter((t) => !inst.stages.some((s) => t >= s.minTemperatureK && t <= s.maxTemperatureK && s.atmospheres.includes(req.atmosphere)));
    const stageText = inst.stages.map((s) => `${s.name} ${s.minTemperatureK}–${s.maxTemperatureK} K`).join(", ") || "no sample stages";
    add(
      missing.length === 0,
      missing.length === 0
        ? `Temperatures ${points.join(", ")} K in ${req.atmosphere} on ${stageText}`
        : `No stage reaches ${missing.join(", ")} K in ${req.atmosphere} (${stageText})`,
    );
  }

  const forms = inst.sampleForms.length > 0 ? inst.sampleForms : ["powder"];
  const badForms = [...new Set(req.samples.map((s) => s.form))].filter((f) => !forms.includes(f));
  add(
    badForms.length === 0,
    badForms.length === 0
      ? `Accepts ${[...new Set(req.samples.map((s) => s.form))].join(", ") || "the samples"}`
      : `Does not take ${badForms.join(", ")} samples`,
  );

  return { instrument: inst, fits: reasons.every((r) => r.ok), reasons, warnings };
}

/** The lab-level checks: every declared pictogram and special category must be accepted. */
export function hazardReasons(req: MatchRequest, lab: MatchLab): Reason[] {
  const pictograms = [...new Set(req.samples.flatMap((s) => s.ghsPictograms))].sort();
  const categories = [...new Set(req.samples.flatMap((s) => s.specialHazards.map((h) => h.category)))].sort();
  if (pictograms.length + categories.length === 0) return [{ ok: true, text: "No hazards declared" }];
  const refusedPictograms = pictograms.filter((p) => !lab.acceptance.pictograms.includes(p));
  const refusedCategories = categories.filter((c) => !lab.acceptance.specialCategories.includes(c));
  const refused = [...refusedPictograms, ...refusedCategories.map(labelOf)];
  return [
    refused.length === 0
      ? { ok: true, text: `Accepts the declared hazards (${[...pictograms, ...categories.map(labelOf)].join(", ")})` }
      : { ok: false, text: `Does not accept ${refused.join(", ")}` },
  ];
}

/** An estimate from the price list: per sample, extra temperature points, hazardous handling, preparation. */
export function estimatePrice(req: MatchRequest, priceList: MatchPriceList | null): number | null {
  const perSample = priceList?.perSampleMinor[req.technique];
  if (!priceList || perSample === undefined) return null;
  const n = Math.max(req.samples.length, 1);
  const extraPoints = Math.max(req.temperaturePointsK.length - 1, 0);
  const hazardous = req.samples.some((s) => s.ghsPictograms.length > 0 || s.specialHazards.length > 0);
  return (
    n * (perSample + priceList.samplePreparationMinor + extraPoints * priceList.perExtraTemperaturePointMinor) +
    (hazardous ? priceList.hazardousHandlingMinor : 0)
  );
}

/**
 * Evaluates every instrument of the lab; an instrument whose source makes the samples fluoresce also names
 * the lab's better one (another that fits without a warning), if it has any.
 */
function evaluateLab(req: MatchRequest, lab: MatchLab, extra: MatchInstrument[] = []): InstrumentFit[] {
  const fits = [...lab.instruments, ...extra].map((i) => evaluateInstrument(req, i));
  const alternatives = fits.filter((f) => lab.instruments.includes(f.instrument));
  const elements = req.samples.flatMap((s) => s.elements);
  for (const f of fits) {
    if (f.warnings.length === 0) continue;
    const glowing = fluorescingElements(elements, instrumentWavelength(f.instrument) ?? 1);
    const better = alternatives.find((o) => o.instrument.id !== f.instrument.id && o.fits && o.warnings.length === 0);
    f.warnings.push(
      better
        ? `Better: ${lab.name}'s ${better.instrument.name} (${sourceLabel(better.instrument)}) avoids the fluorescence of ${glowing.join(", ")}.`
        : `${lab.name} has no other source that avoids it; ask for energy discrimination or a different anode.`,
    );
  }
  return fits;
}

export function matchLab(req: MatchRequest, lab: MatchLab): LabMatch {
  const fits = evaluateLab(req, lab);
  // The best instrument fits and, among those, has no warning; otherwise the one closest to fitting.
  const ranked = [...fits].sort(
    (a, b) =>
      Number(b.fits) - Number(a.fits) || a.warnings.length - b.warnings.length || b.reasons.filter((r) => r.ok).length - a.reasons.filter((r) => r.ok).length,
  );
  const best = ranked[0];
  const hazards = hazardReasons(req, lab);
  const reasons = [...(best?.reasons ?? [{ ok: false, text: "No instruments published" }]), ...hazards];
  const labFits = Boolean(best?.fits) && hazards.every((r) => r.ok);
  return {
    labId: lab.id,
    labName: lab.name,
    labSlug: lab.slug,
    fits: labFits,
    reasons,
    warnings: fits.filter((f) => f.fits).flatMap((f) => f.warnings.map((w) => `${f.instrument.name}: ${w}`)),
    instruments: fits.map((f) => ({
      instrumentId: f.instrument.id,
      name: f.instrument.name,
      source: sourceLabel(f.instrument),
      fits: f.fits,
      reasons: f.reasons,
      warnings: f.warnings,
    })),
    bestInstrumentId: best?.instrument.id ?? null,
    instrumentName: best?.instrument.name ?? null,
    source: best ? sourceLabel(best.instrument) : null,
    estimatedPriceMinor: estimatePrice(req, lab.priceList),
    currency: lab.priceList?.currency ?? null,
    turnaroundDays: lab.priceList?.turnaroundDays ?? null,
  };
}

export interface QuoteJudgement {
  fits: boolean;
  reasons: Reason[];
  /** Fluorescence and similar warnings of the quoted instrument (the card names the instrument already). */
  warnings: string[];
}

/**
 * A quote judged by the instrument it names, not by the lab's best one: that instrument's range, source,
 * stages and sample forms, its fluorescence warning, and the lab's hazard acceptance. `instrument` is the
 * quoted one (it may since have been taken out of service, so it need not be among `lab.instruments`);
 * null when the quote names none.
 */
export function judgeQuote(req: MatchRequest, lab: MatchLab, instrument: MatchInstrument | null): QuoteJudgement {
  const hazards = hazardReasons(req, lab);
  if (!instrument) {
    return {
      fits: false,
      reasons: [{ ok: false, text: "The quote names no instrument, so its range, source and stages cannot be judged" }, ...hazards],
      warnings: [],
    };
  }
  const listed = lab.instruments.some((i) => i.id === instrument.id);
  const fits = evaluateLab(req, lab, listed ? [] : [instrument]);
  const quoted = fits.find((f) => f.instrument.id === instrument.id)!;
  return { fits: quoted.fits && hazards.every((r) => r.ok), reasons: [...quoted.reasons, ...hazards], warnings: quoted.warnings };
}

const LABELS: Record<string, string> = {
  powder_reflection: "powder reflection",
  powder_transmission: "powder transmission",
  thin_film: "thin film",
  single_crystal: "single crystal",
  total_scattering: "total scattering",
  neutron_powder: "neutron powder",
  air_sensitive: "air-sensitive",
  export_controlled: "export-controlled",
};

export function labelOf(code: string) {
  return LABELS[code] ?? code.replace(/_/g, " ");
}

/**
 * Why no lab can take a request, naming the need that rules every lab out and the nearest offer, e.g. "every
 * lab is ruled out by the temperature 1200 K (highest offered 900 K)". When no single need does, each lab's
 * first unmet reason is named. `labs` are the labs that were asked (every approved lab, or the invited ones).
 */
export function whyNoLabFits(req: MatchRequest, labs: MatchLab[]): string {
  if (labs.length === 0) return "there is no approved lab on Diffractory yet";
  const instruments = labs.flatMap((l) => l.instruments);
  const needs: string[] = [];
  if (instruments.length === 0) return "no lab has published an instrument yet";
  const techniques = [...new Set(instruments.map((i) => i.technique))];
  if (!techniques.includes(req.technique)) {
    needs.push(`the technique ${labelOf(req.technique)} (offered: ${techniques.map(labelOf).join(", ")})`);
  }
  const sameTechnique = instruments.filter((i) => i.technique === req.technique);
  const pool = sameTechnique.length ? sameTechnique : instruments;
  if (req.preferredSource !== "any" && !pool.some((i) => i.anode === req.preferredSource)) {
    const offered = [...new Set(pool.map((i) => sourceLabel(i)))];
    needs.push(`the preferred source ${req.preferredSource} Kα (offered: ${offered.join(", ")})`);
  }
  const need = requestedDRange(req);
  if (need) {
    const covers = pool.map((i) => {
      const w = instrumentWavelength(i);
      return w === null ? null : dSpacingCoverage(w, i.twoThetaMin, i.twoThetaMax);
    });
    const fits = covers.some((c) => c && c.dMin <= need.dMin * (1 + 1e-9) && c.dMax >= need.dMax * (1 - 1e-9));
    if (!fits) {
      const reach = covers.filter((c): c is NonNullable<typeof c> => !!c);
      const best = reach.length
        ? ` (the instruments reach d ${fmt(Math.min(...reach.map((c) => c.dMin)))}–${fmt(Math.max(...reach.map((c) => c.dMax)), 2)} Å at most)`
        : "";
      const asked = req.rangeKind === "d_spacing" ? `${req.rangeMin}–${req.rangeMax} Å` : `${req.rangeMin}–${req.rangeMax}° 2θ`;
      needs.push(`the range ${asked}, d ${fmt(need.dMin)}–${fmt(need.dMax, 2)} Å${best}`);
    }
  }
  const points = req.temperaturePointsK.length > 0 ? req.temperaturePointsK : [298];
  const ambientAir = req.atmosphere === "air" && points.every((t) => t >= AMBIENT_K[0] && t <= AMBIENT_K[1]);
  if (!ambientAir) {
    const stages = pool.flatMap((i) => i.stages);
    const inAtmosphere = stages.filter((s) => s.atmospheres.includes(req.atmosphere));
    if (inAtmosphere.length === 0 && req.atmosphere !== "air") {
      const offered = [...new Set(stages.flatMap((s) => s.atmospheres))];
      needs.push(`the atmosphere ${req.atmosphere} (${offered.length ? `offered: ${offered.join(", ")}` : "no lab offers a sample stage"})`);
    } else {
      const reachable = req.atmosphere === "air" ? [...inAtmosphere, { minTemperatureK: AMBIENT_K[0], maxTemperatureK: AMBIENT_K[1] }] : inAtmosphere;
      const missing = points.filter((t) => !reachable.some((s) => t >= s.minTemperatureK && t <= s.maxTemperatureK));
      if (missing.length) {
        const high = Math.max(...reachable.map((s) => s.maxTemperatureK));
        const low = Math.min(...reachable.map((s) => s.minTemperatureK));
        const offer = missing.some((t) => t > high) ? `highest offered ${high} K` : `lowest offered ${low} K`;
        needs.push(`the temperature${missing.length > 1 ? "s" : ""} ${missing.join(", ")} K in ${req.atmosphere} (${offer})`);
      }
    }
  }
  const forms = [...new Set(req.samples.map((s) => s.form))];
  const offeredForms = new Set(pool.flatMap((i) => (i.sampleForms.length ? i.sampleForms : ["powder"])));
  const badForms = forms.filter((f) => !offeredForms.has(f));
  if (badForms.length) needs.push(`the sample form ${badForms.map(labelOf).join(", ")} (offered: ${[...offeredForms].map(labelOf).join(", ")})`);
  if (labs.every((l) => hazardReasons(req, l).some((r) => !r.ok))) {
    const declared = [...new Set(req.samples.flatMap((s) => [...s.ghsPictograms, ...s.specialHazards.map((h) => labelOf(h.category))]))];
    needs.push(`the declared hazards ${declared.join(", ")}`);
  }
  if (needs.length) return `every lab is ruled out by ${needs.join(" and by ")}`;
  const perLab = labs.map((l) => {
    const first = matchLab(req, l).reasons.find((r) => !r.ok);
    return `${l.name}: ${first ? first.text.charAt(0).toLowerCase() + first.text.slice(1) : "does not fit"}`;
  });
  return `each lab is ruled out by a different need (${perLab.join("; ")})`;
}
