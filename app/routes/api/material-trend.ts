// GET /api/materials/:id/trend — a material's lots and their control chart per free cell parameter, for programs
// (docs/design.md#lots-and-trends): the material, its parameters, the limits per parameter from the baseline, and
// `lots`, each with its cell, esds, verdict, window answer and the Western Electric rules it breaks. The material's
// own organisation only; anyone else is told it does not exist (404).
import { materialOfOrganisation, trendOf } from "~/models/materials/trends.server";
import { NoSuchRecord } from "~/models/errors";
import { requireUser } from "~/utils/permissions.server";
import type { Route } from "./+types/material-trend";

export async function loader({ request, params }: Route.LoaderArgs) {
  const actor = await requireUser(request);
  const organisation = actor.active?.organisation;
  const notFound = () => Response.json({ error: "There is no such material in your organisation." }, { status: 404 });
  if (organisation?.kind !== "client") return notFound();
  let material: Awaited<ReturnType<typeof materialOfOrganisation>>;
  try {
    material = await materialOfOrganisation(params.id, organisation.id);
  } catch (error) {
    if (error instanceof NoSuchRecord) return notFound();
    throw error;
  }
  const trend = await trendOf(material);
  const limits = Object.fromEntries(
    trend.parameters.map((k) => {
      const t = trend.byParameter[k]!;
      return [
        k,
        {
          chart: t.chart,
          subgroupSize: t.limits?.n ?? null,
          center: t.limits?.center ?? null,
          sigma: t.limits?.sigma ?? null,
          ucl: t.limits?.ucl ?? null,
          lcl: t.limits?.lcl ?? null,
          range: t.limits?.range ?? null,
          baselineLots: t.limits?.baselinePoints ?? 0,
          problem: t.limitsProblem,
          window: t.window ? { declared: t.window.declared, lower: t.window.lower, upper: t.window.upper } : null,
        },
      ];
    }),
  );
  return Response.json(
    {
      material: {
        productCode: material.productCode,
        name: material.name,
        formula: material.formula,
        crystalSystem: material.crystalSystem,
        declaredCell: {
          a: material.cellA,
          b: material.cellB,
          c: material.cellC,
          alpha: material.cellAlpha,
          beta: material.cellBeta,
          gamma: material.cellGamma,
        },
        acceptanceWindow: material.acceptanceWindow ?? null,
      },
      parameters: trend.parameters,
      baseline: { firstLot: trend.baseline.first, lastLot: trend.baseline.last, chosen: trend.baseline.chosen },
      limits,
      lots: trend.lots.map((l) => ({
        order: l.order,
        lotCode: l.lotCode,
        measuredAt: l.measuredAt,
        cell: l.cell,
        esd: l.esd,
        verdict: l.verdict,
        withinWindow: l.withinWindow,
        inBaseline: l.inBaseline,
        rulesBroken: l.rulesBroken,
        scans: l.scans.map((s) => ({
          measuredAt: new Date(s.measuredAt).toISOString(),
          cell: s.cell,
          esd: s.esd,
          verdict: s.verdict,
          withinWindow: s.withinWindow,
        })),
      })),
    },
    { headers: { "Cache-Control": "private, no-store" } },
  );
}
