// GET /checks/:id/result.json — the whole check (status, file, result) as JSON, for the order's client and its lab.
import { checkStatusJson, sampleDeclarationOf } from "~/domain/lattice-check";
import { measurementConditions } from "~/domain/measurement";
import { sampleOfFile } from "~/models/checks/queries.server";
import { phasesOfSamples } from "~/models/requests/requests.server";
import { requireCheckAccess } from "~/utils/permissions.server";
import type { Route } from "./+types/check-result-json";

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const { check, file, order } = await requireCheckAccess(request, params.id, { what: "result JSON", clientAddress: context.clientAddress });
  const sample = await sampleOfFile(file.sampleId);
  const declaration = sample ? sampleDeclarationOf(sample, await phasesOfSamples([sample.id])) : null;
  const body = {
    check: checkStatusJson(check),
    order: { id: order.id },
    file: { id: file.id, name: file.name, version: file.version, sizeBytes: file.sizeBytes, sha256: file.sha256, scanFormat: file.scanFormat },
    // What the scan file states about its measurement (kept with the file, so also when the check failed), or null.
    measurement: file.scanInfo ? { ...file.scanInfo, conditions: measurementConditions(file.scanInfo) } : null,
    // The sample's declaration: its main phase, further expected phases, candidate forms and acceptance window.
    sample:
      sample && declaration
        ? {
            label: sample.label,
            formula: sample.formula,
            expectedPhase: sample.expectedPhase,
            phases: declaration.phases,
            candidates: declaration.candidates,
            window: declaration.window ?? null,
          }
        : null,
    result: check.status === "done" ? check.result : null,
  };
  const base = file.name.replace(/\.[^.]+$/, "").replace(/[^A-Za-z0-9._-]+/g, "_") || "scan";
  return new Response(JSON.stringify(body, null, 1), {
    headers: {
      "Content-Type": "application/json; charset=utf-8",
      "Content-Disposition": `attachment; filename="${base}-v${file.version}-check.json"`,
      "Cache-Control": "private, no-store",
    },
  });
}
