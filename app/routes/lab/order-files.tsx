// /lab/orders/:id/files — the lab's delivery screen: upload scans and reports straight to storage, see every
// version with its state and live check, and replace a file the engine could not read.
import { requireOrderSide } from "~/utils/permissions.server";
import { data, Form, Link, useActionData, useNavigation, useRevalidator } from "react-router";
import { ConditionsList, EnteredConditions } from "~/components/measurement-conditions";
import { FormError } from "~/components/ui";
import { conditionFieldsToAsk, CONDITION_FIELDS, type MeasurementConditions } from "~/domain/measurement";
import { saveScanConditions } from "~/models/orders/lab-records.server";
import { fileOfOrder } from "~/models/files/files.server";
import { readForm } from "~/utils/form.server";
import { redirectWithToast } from "~/utils/toast.server";
import { CheckPreview } from "~/components/check-preview";
import { DeliveryUploader, useDeliveryQueue } from "~/components/delivery-uploader";
import { OrderFilesTable, type FileRow } from "~/components/order-files-table";
import { EmptyState, PageHeader } from "~/components/ui";
import { UPLOAD_ORDER_STATES } from "~/domain/order-files";
import { organisationNameOf } from "~/models/accounts/organisations.server";
import { requestTitleOf } from "~/models/requests/requests.server";
import { orderFileList, orderSamples } from "~/models/files/files.server";
import { quotedInstrumentOf } from "~/models/requests/quotes.server";
import { ORDER_STATE_LABELS } from "~/domain/order-states";
import { OrderStateBadge } from "~/components/order-state-badge";
import { holderOf, instrumentProfileOf, radiationOf, sampleDeclarationOf } from "~/domain/lattice-check";
import type { Route } from "./+types/order-files";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { order } = await requireOrderSide(request, "lab", params.id);
  const [title, client, instrument] = await Promise.all([
    requestTitleOf(order.requestId),
    organisationNameOf(order.clientOrganisationId),
    quotedInstrumentOf(order.quoteId),
  ]);
  const samples = await orderSamples(order);
  return {
    order: { id: order.id, number: order.number, state: order.state, title: title ?? "", client: client ?? "" },
    samples: samples.map((s) => ({ id: s.id, label: s.label })),
    // What the preview checks a scan against before it is uploaded: the sample's declaration (main phase, further
    // phases, candidates, window) and the quote's source.
    declarations: Object.fromEntries(samples.map((s) => [s.id, sampleDeclarationOf(s, s.phases)])),
    // The quote's instrument as the server's check uses it (a file stating another source is checked with its own).
    instrument: {
      radiation: instrument ? radiationOf(instrument) : null,
      name: instrument?.name ?? null,
      holder: instrument ? holderOf(instrument) : undefined,
      instrumentProfile: instrument ? instrumentProfileOf(instrument) : undefined,
    },
    files: await orderFileList(order.id, { side: "lab" }),
    canUpload: UPLOAD_ORDER_STATES.includes(order.state),
  };
}

const NUMBER_LIMITS: Partial<Record<keyof MeasurementConditions, [number, number]>> = {
  twoThetaStart: [-10, 180],
  twoThetaEnd: [-10, 180],
  step: [1e-6, 10],
  timePerStep: [1e-4, 1e5],
  temperatureK: [0.01, 3000],
};

/** Reads the conditions form: text fields trimmed, numbers within plain physical limits; a sentence on bad input. */
function readConditions(form: FormData): { conditions: MeasurementConditions } | { error: string } {
  const conditions: MeasurementConditions = {};
  for (const f of CONDITION_FIELDS) {
    const raw = String(form.get(f.key) ?? "").trim();
    if (!raw) continue;
    if (f.kind === "text") {
      if (raw.length > 500) return { error: `${f.label} may be at most 500 characters.` };
      (conditions as Record<string, unknown>)[f.key] = raw;
      continue;
    }
    const value = Number(raw.replace(",", "."));
    const [lo, hi] = NUMBER_LIMITS[f.key] ?? [-Infinity, Infinity];
    if (!Number.isFinite(value) || value < lo || value > hi)
      return { error: `${f.label} must be a number between ${lo} and ${hi}${f.unit ? ` ${f.unit}` : ""}.` };
    (conditions as Record<string, unknown>)[f.key] = value;
  }
  if (conditions.twoThetaStart != null && conditions.twoThetaEnd != null && conditions.twoThetaStart >= conditions.twoThetaEnd)
    return { error: "The 2θ start must be below the 2θ end." };
  return { conditions };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { actor, order } = await requireOrderSide(request, "lab", params.id);
  const form = await readForm(request);
  if (form.get("intent") !== "conditions") return data({ error: "Nothing to do." }, { status: 400 });
  const file = await fileOfOrder(order.id, String(form.get("fileId") ?? ""));
  if (file?.kind !== "scan") return data({ error: "No such scan on this order." }, { status: 404 });
  const read = readConditions(form);
  if ("error" in read) return data({ error: read.error, fileId: file.id }, { status: 400 });
  await saveScanConditions(order.id, file.id, read.conditions, actor.user.name);
  return redirectWithToast(`/lab/orders/${order.id}/files`, { kind: "success", message: `Measurement conditions of ${file.name} v${file.version} saved.` });
}

/** A stored scan the engine could not read, or a refused upload, is replaced by a new version of the same name. */
const replaceable = (row: FileRow) => (row.state === "rejected" || row.check?.status === "failed") && !row.deletedAt;

export default function LabOrderFiles({ loaderData }: Route.ComponentProps) {
  const { order, samples, declarations, instrument, files, canUpload } = loaderData;
  // Scans that will count as delivered but were measured with another source than the quote names.
  const mismatched = files.filter((f) => f.kind === "scan" && f.state === "stored" && !f.deletedAt && f.radiationMismatch);
  const revalidator = useRevalidator();
  const queue = useDeliveryQueue(order.id, samples, () => void revalidator.revalidate());
  const scans = files.filter((f) => f.kind === "scan" && f.state === "stored" && !f.deletedAt);
  return (
    <div className="space-y-8">
      <PageHeader
        title={order.title}
        subtitle={
          <>
            Order {order.number} · delivery for {order.client} ·{" "}
            <Link to={`/lab/orders/${order.id}`} className="underline">
              Back to the order, to mark the data delivered
            </Link>
          </>
        }
        actions={<OrderStateBadge state={order.state} />}
      />
      {canUpload ? (
        <DeliveryUploader
          queue={queue}
          samples={samples}
          // The in-browser check preview (engine in a Web Worker) renders here for each queued scan.
          preview={(item) =>
            item.kind === "scan" && item.status === "ready" && declarations[item.sampleId] ? (
              <CheckPreview file={item.file} sample={declarations[item.sampleId]} instrument={instrument} />
            ) : null
          }
        />
      ) : (
        <p className="card text-sm text-ink-700">
          Files are delivered once the samples have arrived (samples received, measuring or data delivered); this order is "{ORDER_STATE_LABELS[order.state]}".
        </p>
      )}
      <section aria-labelledby="delivered-heading" className="space-y-2">
        <h2 id="delivered-heading" className="text-lg font-semibold">
          Delivered files
        </h2>
        <p className="text-xs text-ink-600">
          Every version is kept; uploading a file of the same name adds the next version. Only stored files — verified by content and SHA-256 — count as
          delivered; each stored scan is checked against its sample's declared cell.
        </p>
        {mismatched.length ? (
          <div className="rounded-lg border border-caution-600/30 bg-caution-50 p-3 text-sm text-caution-700" role="alert" data-testid="mismatch-summary">
            <p className="font-semibold">
              <span aria-hidden="true">! </span>
              Before you mark the data delivered: {mismatched.length === 1 ? "one scan was" : `${mismatched.length} scans were`} measured with another source
              than the quote&apos;s instrument ({mismatched.map((f) => `${f.name} v${f.version}`).join(", ")}). The note beside each file below names both
              sources; make sure each file belongs to this order.
            </p>
          </div>
        ) : null}
        {files.length === 0 ? (
          <EmptyState title="No files yet">Drop the scans of each sample and your report above.</EmptyState>
        ) : (
          <OrderFilesTable
            rows={files}
            caption="Files of this order"
            showState
            actions={(row) => (
              <span className="inline-flex items-center gap-3">
                {row.state === "stored" ? (
                  <a href={`/files/${row.id}/download`} className="font-semibold text-beam-700 underline" aria-label={`Download ${row.name} v${row.version}`}>
                    Download
                  </a>
                ) : null}
                {canUpload && replaceable(row) ? (
                  <label className="btn-secondary cursor-pointer py-1">
                    Replace
                    <input
                      type="file"
                      className="sr-only"
                      aria-label={`Replace ${row.name} v${row.version}`}
                      onChange={(e) => {
                        const file = e.currentTarget.files?.[0];
                        if (file) queue.add([file], { name: row.name, kind: row.kind, sampleId: row.sampleId ?? null });
                        e.currentTarget.value = "";
                      }}
                    />
                  </label>
                ) : null}
              </span>
            )}
          />
        )}
      </section>
      {scans.length ? <ConditionsSection scans={scans} /> : null}
    </div>
  );
}

/** Each stored scan: what its file states, what the lab entered, and the form for what the file leaves out. */
function ConditionsSection({ scans }: { scans: Route.ComponentProps["loaderData"]["files"] }) {
  const answer = useActionData<typeof action>() as { error?: string; fileId?: string } | undefined;
  const busy = useNavigation().state !== "idle";
  return (
    <section aria-labelledby="conditions-heading" className="space-y-3">
      <h2 id="conditions-heading" className="text-lg font-semibold">
        Measurement conditions
      </h2>
      <p className="text-xs text-ink-600">What each scan file states is read from it; enter what it leaves out (the client reads both in the data room).</p>
      {scans.map((f) => {
        const ask = conditionFieldsToAsk(f.scanInfo);
        const label = `${f.name} v${f.version}`;
        return (
          <article key={f.id} className="card space-y-2" aria-label={`Measurement conditions of ${label}`}>
            <h3 className="font-semibold">
              {label} {f.sampleLabel ? <span className="text-sm font-normal text-ink-600">· sample {f.sampleLabel}</span> : null}
            </h3>
            {f.scanInfo ? <ConditionsList info={f.scanInfo} /> : <p className="text-sm text-ink-600">The file states nothing about its measurement.</p>}
            <EnteredConditions conditions={f.conditions} name={label} />
            <details open={answer?.fileId === f.id}>
              <summary className="cursor-pointer text-sm font-semibold text-beam-700">Enter what the file does not state</summary>
              <Form method="post" className="mt-2 grid gap-3 sm:grid-cols-3">
                <input type="hidden" name="intent" value="conditions" />
                <input type="hidden" name="fileId" value={f.id} />
                {ask.map((field) => (
                  <div key={field.key} className={field.key === "note" ? "sm:col-span-3" : undefined}>
                    <label htmlFor={`${f.id}-${field.key}`} className="label">
                      {field.label}
                      {field.unit ? ` (${field.unit})` : ""}
                    </label>
                    <input
                      id={`${f.id}-${field.key}`}
                      name={field.key}
                      className="input"
                      inputMode={field.kind === "number" ? "decimal" : undefined}
                      defaultValue={String(f.conditions?.[field.key] ?? "")}
                    />
                  </div>
                ))}
                <div className="sm:col-span-3">
                  {answer?.fileId === f.id ? <FormError errors={answer.error ? [answer.error] : null} /> : null}
                  <button type="submit" className="btn-secondary" disabled={busy}>
                    Save the conditions of {label}
                  </button>
                </div>
              </Form>
            </details>
          </article>
        );
      })}
    </section>
  );
}

export function meta({ data }: Route.MetaArgs) {
  return [
    { title: `Delivery: ${data?.order.title ?? "order"} — Diffractory` },
    { name: "description", content: "Deliver an order's data: upload scans and reports, see each version with its state and lattice check." },
  ];
}
