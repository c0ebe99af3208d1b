// /client/materials/:id/trend?parameter=a — a material's lots over time for one cell parameter: the control chart
// (individuals or X̄/R, limits from the chosen baseline, Western Electric rules), the moving-range or range chart
// below, the acceptance window as a band, the lots in a table, and the baseline's choice (docs/design.md#lots-and-trends).
// The client organisation's own materials only; any other is a 404.
import { CellHeading, CellSymbol } from "~/components/symbols";
import { useMemo } from "react";
import { data, Form, Link } from "react-router";
import { type ControlChartData, ControlChart } from "~/components/control-chart";
import { useFormat } from "~/components/locale";
import { Badge, EmptyState, PageHeader, TableCard } from "~/components/ui";
import { VERDICT_WORDS } from "~/domain/check-result";
import { WESTERN_ELECTRIC_RULES } from "~/domain/spc";
import { isCellKey, PARAMETER_NAMES, type ParameterTrend, rulesWords, trendPath, trendSummary } from "~/domain/trends";
import { materialOfOrganisation, setBaseline, trendOf } from "~/models/materials/trends.server";
import { readForm } from "~/utils/form.server";
import { forbidden, orNotFound, requireOrgRole } from "~/utils/permissions.server";
import { redirectWithToast } from "~/utils/toast.server";
import type { Route } from "./+types/material-trend";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { membership, user } = await requireOrgRole(request, "client");
  const material = await orNotFound(materialOfOrganisation(params.id, membership.organisation.id));
  const trend = await trendOf(material);
  const asked = new URL(request.url).searchParams.get("parameter");
  const parameter = isCellKey(asked) && trend.parameters.includes(asked) ? asked : (trend.parameters[0] ?? null);
  const canChooseBaseline = membership.role === "owner" || membership.role === "manager" || material.qcUserIds.includes(user.id);
  return {
    material: { id: material.id, productCode: material.productCode, name: material.name, crystalSystem: material.crystalSystem },
    parameters: trend.parameters,
    parameter,
    askedUnknown: asked !== null && asked !== parameter,
    baseline: trend.baseline,
    lots: trend.lots.map((l) => ({
      order: l.order,
      lotCode: l.lotCode,
      measuredAt: l.measuredAt,
      scans: l.scans.length,
      cell: l.cell,
      esd: l.esd,
      verdict: l.verdict,
      withinWindow: l.withinWindow,
      rulesBroken: l.rulesBroken,
      inBaseline: l.inBaseline,
    })),
    chart: parameter ? (trend.byParameter[parameter] ?? null) : null,
    canChooseBaseline,
  };
}

const positive = (v: FormDataEntryValue | null) => {
  const s = typeof v === "string" ? v.trim() : "";
  return /^\d{1,6}$/.test(s) && Number(s) >= 1 ? Number(s) : null;
};

export async function action({ request, params, context }: Route.ActionArgs) {
  const { membership, user } = await requireOrgRole(request, "client");
  const material = await orNotFound(materialOfOrganisation(params.id, membership.organisation.id));
  if (!(membership.role === "owner" || membership.role === "manager" || material.qcUserIds.includes(user.id)))
    forbidden("Only the organisation's owners and managers and the material's QC people choose its baseline.");
  const form = await readForm(request);
  const parameter = String(form.get("parameter") ?? "");
  const back = trendPath(material.id, isCellKey(parameter) ? parameter : undefined);
  if (form.get("intent") === "baseline-default") {
    await setBaseline({ material, first: null, last: null, actorUserId: user.id, clientAddress: context.clientAddress });
    return redirectWithToast(back, { kind: "success", message: "The baseline is the first 20 lots again." });
  }
  if (form.get("intent") !== "baseline") return data({ error: "Choose the baseline's first and last lot, then save." }, { status: 400 });
  const first = positive(form.get("first"));
  const last = positive(form.get("last"));
  if (first === null || last === null) return data({ error: "The baseline's first and last lot are lot numbers on the record: 1, 2, 3 …" }, { status: 400 });
  if (last - first < 1) return data({ error: "The baseline needs at least two lots: the last lot must come after the first." }, { status: 400 });
  const { lots } = await trendOf(material);
  if (last > lots.length)
    return data({ error: `The record has ${lots.length} lot${lots.length === 1 ? "" : "s"}, so the baseline cannot end at lot ${last}.` }, { status: 400 });
  await setBaseline({ material, first, last, actorUserId: user.id, clientAddress: context.clientAddress });
  return redirectWithToast(back, { kind: "success", message: `The baseline is lots ${first} to ${last}.` });
}

function chartData(
  t: ParameterTrend,
  baseline: { first: number; last: number },
  dateOf: (iso: string) => string,
): { main: ControlChartData; range: ControlChartData } {
  const { digits, name, unit } = PARAMETER_NAMES[t.parameter];
  const words = (p: ParameterTrend["points"][number]) => `Lot ${p.lotCode} (no. ${p.order}), ${dateOf(p.measuredAt)}`;
  return {
    main: {
      points: t.points.map((p) => ({ x: p.order, tick: p.lotCode, words: words(p), value: p.value, rules: p.rules })),
      limits: t.limits ? { center: t.limits.center, ucl: t.limits.ucl, lcl: t.limits.lcl, sigma: t.limits.sigma } : null,
      zones: true,
      band: t.window ? { lower: t.window.lower, upper: t.window.upper, label: `Acceptance window ${t.window.words}` } : null,
      baseline: [baseline.first, baseline.last],
      axisLabel: `${name} (${unit})`,
      axisSymbol: name,
      valueLabel: t.chart === "xbar_r" ? "Lot mean" : "Lot value",
      digits,
    },
    range: {
      points: t.points.map((p) => ({ x: p.order, tick: p.lotCode, words: words(p), value: p.range, rules: [] })),
      limits: t.limits ? { center: t.limits.range.center, ucl: t.limits.range.ucl, lcl: t.limits.range.lcl } : null,
      zones: false,
      baseline: [baseline.first, baseline.last],
      axisLabel: `${t.chart === "xbar_r" ? "Range" : "Moving range"} (${unit})`,
      valueLabel: t.chart === "xbar_r" ? "Range of the lot's scans" : "Moving range",
      digits: digits + 1,
    },
  };
}

export default function MaterialTrend({ loaderData, actionData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { material, parameters, parameter, chart, lots, baseline, canChooseBaseline, askedUnknown } = loaderData;
  const charts = useMemo(() => (chart ? chartData(chart, baseline, (iso) => fmt.date(iso)) : null), [chart, baseline, fmt]);
  const error = actionData && "error" in actionData ? actionData.error : null;
  const p = parameter ? PARAMETER_NAMES[parameter] : null;
  return (
    <div className="space-y-6">
      <PageHeader
        title={`${material.productCode} — ${material.name}: lots and trend`}
        subtitle={chart?.chartWords ?? "Every checked lot of the material adds its refined cell to this record."}
        actions={
          <div className="flex gap-2">
            <Link to={`/client/materials/${material.id}`} className="btn-secondary">
              The material
            </Link>
            <a href={`/client/materials/${material.id}/trend.csv`} className="btn-secondary" download>
              Download CSV
            </a>
          </div>
        }
      />
      {lots.length === 0 || !parameter || !chart || !charts || !p ? (
        <EmptyState title="No lots on the record yet">
          When a scan of a lot of this material has been checked, its refined cell, verdict and window answer appear here.
        </EmptyState>
      ) : (
        <>
          <nav aria-label="Cell parameter" className="flex flex-wrap gap-2">
            {parameters.map((k) => (
              <Link
                key={k}
                to={trendPath(material.id, k)}
                aria-current={k === parameter ? "page" : undefined}
                className={k === parameter ? "btn-primary px-3 py-1 text-sm" : "btn-secondary px-3 py-1 text-sm"}
              >
                <CellSymbol name={k} />
              </Link>
            ))}
          </nav>
          {askedUnknown ? (
            <p className="text-sm text-caution-700">
              That parameter is not free in this material's crystal system; showing <CellSymbol name={parameter} />.
            </p>
          ) : null}

          <section className="card space-y-3" aria-labelledby="chart-heading">
            <h2 id="chart-heading" className="text-lg font-semibold">
              {chart.chart === "xbar_r" ? "X̄ chart" : "Individuals chart"} of <CellSymbol name={parameter} />
            </h2>
            {chart.limits ? null : (
              <p className="text-sm text-caution-700" data-testid="no-limits">
                {chart.limitsProblem}
              </p>
            )}
            <ControlChart data={charts.main} keyed={false} label={`Control chart of ${p.name}. ${trendSummary(chart)}`} testId="trend-chart" />
            <ul className="flex flex-wrap gap-x-5 gap-y-1 text-xs text-ink-700" aria-label="Key to the chart">
              <li>● a lot's value</li>
              <li className="text-beam-700">— centre line</li>
              <li className="text-danger-700">- - control limits (3σ); the shaded bands are the 1σ–2σ and 2σ–3σ zones</li>
              {chart.window ? (
                <li className="text-ok-700">
                  - - acceptance window <CellSymbol name={parameter} />
                  {chart.window.words.slice(p.name.length)} (green band)
                </li>
              ) : null}
              <li className="text-danger-700">◆ a lot that breaks a rule, with the rule numbers</li>
              <li>grey strip along the bottom: the baseline lots</li>
            </ul>
            <h3 className="font-semibold">{chart.chart === "xbar_r" ? "Range chart" : "Moving-range chart"}</h3>
            <ControlChart
              data={charts.range}
              height={180}
              label={`${chart.chart === "xbar_r" ? "Range" : "Moving-range"} chart of ${p.name}${chart.limits ? `: centre ${chart.limits.range.center.toFixed(p.digits + 1)} ${p.unit}, upper limit ${chart.limits.range.ucl.toFixed(p.digits + 1)} ${p.unit}.` : "."}`}
              testId="range-chart"
            />
            <p className="text-sm text-ink-700" data-testid="trend-summary">
              {trendSummary(chart)}
            </p>
            <details className="text-sm text-ink-700">
              <summary>The rules (Western Electric Statistical Quality Control Handbook, 1956)</summary>
              <ol className="list-decimal pl-5">
                {([1, 2, 3, 4] as const).map((r) => (
                  <li key={r}>{WESTERN_ELECTRIC_RULES[r]}</li>
                ))}
              </ol>
            </details>
          </section>

          <section className="card space-y-2" aria-labelledby="baseline-heading">
            <h2 id="baseline-heading" className="text-lg font-semibold">
              Baseline
            </h2>
            <p className="text-sm text-ink-700">
              The control limits come from lots {baseline.first} to {baseline.last}
              {baseline.chosen ? " (chosen)" : " (the default: the first 20 lots, or all when there are fewer)"}.
            </p>
            {canChooseBaseline ? (
              <Form method="post" className="flex flex-wrap items-end gap-3">
                <input type="hidden" name="parameter" value={parameter} />
                <label className="text-sm">
                  First lot
                  <input name="first" type="number" min={1} max={lots.length} defaultValue={baseline.first} className="input ml-2 w-24" />
                </label>
                <label className="text-sm">
                  Last lot
                  <input name="last" type="number" min={2} max={lots.length} defaultValue={baseline.last} className="input ml-2 w-24" />
                </label>
                <button type="submit" name="intent" value="baseline" className="btn-primary">
                  Save the baseline
                </button>
                {baseline.chosen ? (
                  <button type="submit" name="intent" value="baseline-default" className="btn-secondary">
                    Back to the default
                  </button>
                ) : null}
              </Form>
            ) : null}
            {error ? (
              <p role="alert" className="text-sm text-danger-700">
                {error}
              </p>
            ) : null}
          </section>

          <TableCard
            columns={[
              "No.",
              "Lot",
              "Measured",
              <>
                <CellHeading name={parameter} /> ± esd
              </>,
              "Verdict",
              "Window",
              "Rules broken",
            ]}
            caption="Lots on the record"
          >
            {lots.map((l) => {
              const value = l.cell[parameter];
              const esd = l.esd[parameter];
              const v = l.verdict && l.verdict in VERDICT_WORDS ? VERDICT_WORDS[l.verdict as keyof typeof VERDICT_WORDS] : null;
              const words = rulesWords(l.rulesBroken);
              return (
                <tr key={l.order} id={`lot-${l.order}`} data-rules={words ? "broken" : undefined}>
                  <td>
                    {l.order}
                    {l.inBaseline ? <span className="ml-1 text-xs text-ink-600">(baseline)</span> : null}
                  </td>
                  <td className="font-mono text-xs">
                    {l.lotCode}
                    {l.scans > 1 ? <span className="ml-1 text-ink-600">({l.scans} scans)</span> : null}
                  </td>
                  <td>{fmt.date(l.measuredAt)}</td>
                  <td className="font-mono text-xs">
                    {value == null ? "—" : value.toFixed(p.digits)}
                    {esd == null ? "" : ` ± ${esd.toFixed(p.digits)}`}
                  </td>
                  <td>{v ? <Badge tone={v.tone}>{v.label}</Badge> : (l.verdict ?? "—")}</td>
                  <td>{l.withinWindow === null ? "—" : l.withinWindow ? "inside" : <span className="text-danger-700">outside</span>}</td>
                  <td className="text-sm">{words || "none"}</td>
                </tr>
              );
            })}
          </TableCard>
        </>
      )}
    </div>
  );
}

export function meta({ data }: Route.MetaArgs) {
  return [
    { title: data ? `${data.material.productCode} trend — Diffractory` : "Trend — Diffractory" },
    { name: "description", content: "A material's lots over time for one cell parameter: control chart, limits from the chosen baseline and rule signals." },
  ];
}
