// /lab/orders/:id/files — the lab's delivery screen: upload scans and reports straight to storage, see every
// version with its state and live check, and replace a file the engine could not read.
import { requireOrderSide } from "~/utils/permissions.server";
import { Link, useRevalidator } from "react-router";
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

/** A stored scan the engine could not read, or a refused upload, is replaced by a new version of the same name. */
const replaceable = (row: FileRow) => (row.state === "rejected" || row.check?.status === "failed") && !row.deletedAt;

export default function LabOrderFiles({ loaderData }: Route.ComponentProps) {
  const { order, samples, declarations, instrument, files, canUpload } = loaderData;
  // Scans that will count as delivered but were measured with another source than the quote names.
  const mismatched = files.filter((f) => f.kind === "scan" && f.state === "stored" && !f.deletedAt && f.radiationMismatch);
  const revalidator = useRevalidator();
  const queue = useDeliveryQueue(order.id, samples, () => void revalidator.revalidate());
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
    </div>
  );
}

export function meta({ data }: Route.MetaArgs) {
  return [{ title: `Delivery: ${data?.order.title ?? "order"} — Diffractory` }];
}
