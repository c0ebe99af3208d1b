// A lab's public profile: instruments with the d-spacings they reach, stages, hazards accepted, prices.
import { TwoTheta, Formula } from "~/components/symbols";
import { Link } from "react-router";
import { Badge, PageHeader, SafetyNotice, TableCard } from "~/components/ui";
import { dSpacingCoverage } from "~/domain/coverage";
import { labBySlug } from "~/models/labs/directory.server";
import { instrumentAccuracy, onTimeRecord } from "~/models/labs/calibration.server";
import { accuracyText, countsForMatching, onTimeText } from "~/domain/calibration-record";
import { loadMatchLabs } from "~/models/labs/matching.server";
import { instrumentWavelength, labelOf, sourceLabel } from "~/domain/matching";
import { tiersToShow } from "~/domain/price-tiers";
import { isSlug } from "~/utils/auth.server";
import { notFound } from "~/utils/permissions.server";
import type { Route } from "./+types/lab-profile";
import { useFormat } from "~/components/locale";

// Public by design: only approved labs are shown; any other slug is a 404.
export async function loader({ params }: Route.LoaderArgs) {
  // A slug is checked before the query: a NUL in it would be a database error (a 500) instead of a 404.
  const row = isSlug(params.slug) ? await labBySlug(params.slug) : undefined;
  if (!row || row.state !== "approved") notFound("No approved lab is listed at this address.");
  const [lab] = await loadMatchLabs([row.id]);
  const [accuracy, onTime] = await Promise.all([instrumentAccuracy(row.id), onTimeRecord(row.id)]);
  return {
    lab: {
      name: lab.name,
      description: row.description,
      city: row.city,
      country: row.country,
      acceptance: lab.acceptance,
      priceList: lab.priceList,
      tiers: tiersToShow(lab.priceList?.tiers),
      instruments: lab.instruments.map((i) => {
        const wavelength = instrumentWavelength(i);
        const cover = wavelength ? dSpacingCoverage(wavelength, i.twoThetaMin, i.twoThetaMax) : null;
        return {
          ...i,
          source: sourceLabel(i),
          dMin: cover?.dMin ?? null,
          dMax: cover?.dMax ?? null,
          accuracy: accuracy.filter((a) => a.instrumentId === i.id).map(accuracyText),
          withdrawn: !countsForMatching(i.calibrationState),
        };
      }),
      onTime: onTimeText(onTime),
    },
  };
}

export default function LabProfile({ loaderData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { lab } = loaderData;
  const prices = lab.priceList;
  return (
    <div className="mx-auto max-w-6xl px-4 py-10 sm:px-6">
      <p className="mb-2 text-sm">
        <Link to="/labs" className="text-beam-700 underline">
          ← Lab directory
        </Link>
      </p>
      <PageHeader title={lab.name} subtitle={[lab.city, lab.country].filter(Boolean).join(", ")} actions={<Badge tone="ok">Vetted lab</Badge>} />
      {lab.description ? <p className="mb-4 max-w-3xl text-ink-700">{lab.description}</p> : null}
      <p className="mb-8 text-sm text-ink-700">{lab.onTime}</p>
      <h2 className="mb-3 text-lg font-semibold">Instruments</h2>
      <TableCard
        columns={[
          "Instrument",
          "Technique",
          "Source",
          <>
            <TwoTheta /> range
          </>,
          <>
            <i className="symbol">d</i> reached (Å)
          </>,
          "Stages",
          "Measured accuracy",
        ]}
        caption="Instruments"
      >
        {lab.instruments.map((i) => (
          <tr key={i.id}>
            <td className="font-medium">{i.name}</td>
            <td>{labelOf(i.technique)}</td>
            <td>
              {i.source}
              {i.energyDiscrimination ? <span className="block text-xs text-ink-500">energy-discriminating detector</span> : null}
            </td>
            <td>
              {i.twoThetaMin}–{i.twoThetaMax}°
            </td>
            <td>{i.dMin !== null ? `${i.dMin.toFixed(3)}–${Number.isFinite(i.dMax) ? i.dMax!.toFixed(1) : "∞"}` : "—"}</td>
            <td>{i.stages.map((s) => `${s.name} ${s.minTemperatureK}–${s.maxTemperatureK} K (${s.atmospheres.join(", ")})`).join("; ") || "ambient only"}</td>
            <td>
              {i.accuracy.length
                ? i.accuracy.map((t) => (
                    <span key={t} className="block">
                      <Formula>{t}</Formula>
                    </span>
                  ))
                : "No calibration scans on record"}
              {i.withdrawn ? <span className="block text-xs text-caution-700">Calibration due: not taking new requests</span> : null}
            </td>
          </tr>
        ))}
      </TableCard>
      <div className="mt-8 grid gap-6 md:grid-cols-2">
        <div className="card">
          <h2 className="text-lg font-semibold">Hazards accepted</h2>
          <p className="mt-2 text-sm text-ink-700">
            {[...lab.acceptance.pictograms, ...lab.acceptance.specialCategories.map(labelOf)].join(", ") || "No hazardous samples."}
          </p>
          {lab.acceptance.pictograms.length + lab.acceptance.specialCategories.length > 0 ? <SafetyNotice className="mt-4" /> : null}
        </div>
        <div className="card">
          <h2 className="text-lg font-semibold">Prices</h2>
          {prices ? (
            <dl className="mt-2 grid grid-cols-2 gap-x-4 gap-y-1 text-sm">
              {Object.entries(prices.perSampleMinor).map(([technique, minor]) => (
                <div key={technique} className="contents">
                  <dt className="text-ink-600">Per sample, {labelOf(technique)}</dt>
                  <dd className="text-right font-medium">{fmt.money(minor ?? 0, prices.currency)}</dd>
                </div>
              ))}
              <dt className="text-ink-600">Per extra temperature point</dt>
              <dd className="text-right">{fmt.money(prices.perExtraTemperaturePointMinor, prices.currency)}</dd>
              <dt className="text-ink-600">Hazardous handling</dt>
              <dd className="text-right">{fmt.money(prices.hazardousHandlingMinor, prices.currency)}</dd>
              <dt className="text-ink-600">Turnaround</dt>
              <dd className="text-right">{prices.turnaroundDays} days</dd>
            </dl>
          ) : (
            <p className="mt-2 text-sm text-ink-600">No price list published yet.</p>
          )}
          {prices && lab.tiers.length ? (
            <section className="mt-4" aria-labelledby="tier-prices-heading">
              <h3 id="tier-prices-heading" className="font-semibold">
                Prices by client kind
              </h3>
              <p className="text-xs text-ink-600">For clients whose kind Diffractory has confirmed on their profile; anything not listed is the price above.</p>
              {lab.tiers.map(({ kind, label, tier }) => (
                <dl key={kind} className="mt-2 grid grid-cols-2 gap-x-4 gap-y-1 text-sm" aria-label={`${label} prices`}>
                  {Object.entries(tier.perSampleMinor ?? {})
                    .filter(([technique, minor]) => minor !== undefined && prices.perSampleMinor[technique] !== undefined)
                    .map(([technique, minor]) => (
                      <div key={technique} className="contents">
                        <dt className="text-ink-600">
                          {label}, per sample, {labelOf(technique)}
                        </dt>
                        <dd className="text-right font-medium">{fmt.money(minor ?? 0, prices.currency)}</dd>
                      </div>
                    ))}
                  {tier.perInstrumentHourMinor !== undefined ? (
                    <div className="contents">
                      <dt className="text-ink-600">{label}, per instrument hour</dt>
                      <dd className="text-right font-medium">{fmt.money(tier.perInstrumentHourMinor, prices.currency)}</dd>
                    </div>
                  ) : null}
                </dl>
              ))}
            </section>
          ) : null}
        </div>
      </div>
    </div>
  );
}

export function meta({ data }: Route.MetaArgs) {
  const where = data ? [data.lab.city, data.lab.country].filter(Boolean).join(", ") : "";
  const description = data
    ? `${data.lab.name}${where ? `, ${where}` : ""}: a vetted powder-diffraction lab on Diffractory — its instruments, the d-spacings they reach, hazards accepted and prices.`
    : "A vetted powder-diffraction lab on Diffractory: its instruments, the d-spacings they reach, hazards accepted and prices.";
  return [{ title: `${data?.lab.name ?? "Lab"} — Diffractory` }, { name: "description", content: description }];
}
