// The samples of an order with their declared phases, cell, acceptance window and hazards, for the lab's order page and the packing slip.
import type { Sample, SamplePhase } from "~/db/schema";
import { HazardDeclaration, SampleFacts } from "./request-parts";
import { SafetyNotice } from "./ui";

/** Whether any of the samples declares a hazard (a pictogram, an H-statement or a special category). */
export function anyHazardDeclared(samples: { ghsPictograms: unknown[] | null; hStatements: unknown[] | null; specialHazards: unknown[] | null }[]) {
  return samples.some((s) => (s.ghsPictograms?.length ?? 0) > 0 || (s.hStatements?.length ?? 0) > 0 || (s.specialHazards?.length ?? 0) > 0);
}

/** `sds` maps sample ids to download links of their safety data sheets (the lab's order page); without it the name shows. */
export function OrderSamples({
  samples,
  sds,
}: {
  sds?: Record<string, string>;
  samples: (Pick<
    Sample,
    | "id"
    | "label"
    | "formula"
    | "form"
    | "massMg"
    | "expectedPhase"
    | "crystalSystem"
    | "centering"
    | "cellA"
    | "cellB"
    | "cellC"
    | "cellAlpha"
    | "cellBeta"
    | "cellGamma"
    | "acceptanceWindow"
    | "ghsPictograms"
    | "hStatements"
    | "specialHazards"
    | "handlingNotes"
    | "afterMeasurement"
    | "sdsFileName"
  > & { phases: SamplePhase[] })[];
}) {
  const anyHazard = anyHazardDeclared(samples);
  return (
    <div className="space-y-4">
      {samples.map((s) => (
        <article key={s.id} className="rounded-lg border border-ink-200 p-4" aria-label={`Sample ${s.label}`}>
          <h3 className="font-semibold">{s.label}</h3>
          <SampleFacts sample={s} />
          <div className="mt-3">
            <HazardDeclaration hazards={s} sdsUrl={sds?.[s.id]} />
          </div>
        </article>
      ))}
      {anyHazard ? <SafetyNotice /> : null}
    </div>
  );
}
