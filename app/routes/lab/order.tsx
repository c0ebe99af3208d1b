// /lab/orders/:id — the lab's view of an order: the samples and hazards, the shipment, and the lab's moves.
import { OrderThread } from "~/components/message-thread";
import { orderThread, viewThread } from "~/models/messages/messages.server";
import { requireOrderSide } from "~/utils/permissions.server";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, Link, useNavigation } from "react-router";
import { z } from "zod";
import { OrderSamples } from "~/components/order-samples";
import { PurchaseOrderFacts } from "~/components/purchase-order-fields";
import { purchaseOrderView } from "~/models/orders/purchase-orders.server";
import { OrderTimelineCard } from "~/components/order-timeline";
import { FormError, PageHeader } from "~/components/ui";
import { organisationNameOf } from "~/models/accounts/organisations.server";
import { orderSamples } from "~/models/files/files.server";
import { markDelivered, markReceived, startMeasuring } from "~/models/orders/lifecycle.server";
import { samplesWithoutCompletedCheck } from "~/models/checks/queries.server";
import { shipmentOf } from "~/models/orders/queries.server";
import { canMove, samplesAtLab } from "~/domain/order-states";
import { OrderStateBadge } from "~/components/order-state-badge";
import { orderTimeline } from "~/models/orders/queries.server";
import { OrderMoveRefused } from "~/models/orders/lifecycle.server";
import { PaymentProblem } from "~/models/payments/provider.server";
import { refuseOnArrival } from "~/models/orders/lifecycle.server";
import { requestTitleOf, sdsLinks } from "~/models/requests/requests.server";
import { redirectWithToast } from "~/utils/toast.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/order";
import { useFormat } from "~/components/locale";
import { DisputePanel } from "~/components/dispute-panel";
import { disputeCase } from "~/models/orders/disputes.server";
import { DueLine, ReceiptFields, ReceiptRecordCard, RefusalFields, VerdictConfirmation } from "~/components/lab-records";
import { receiptsOf, scansToConfirm } from "~/models/orders/lab-records.server";
import { orderDocumentLinks } from "~/models/invoices/invoices.server";
import { OrderDocuments } from "~/components/order-documents";
import { AMOUNT_UNITS, dueStatus, RECEIPT_CONDITIONS, REFUSAL_REASONS } from "~/domain/receipt";
import { CONFIRM_FIELD } from "~/domain/verdict-confirmation";

const labOrder = (request: Request, orderId: string) => requireOrderSide(request, "lab", orderId);

export async function loader({ request, params }: Route.LoaderArgs) {
  const { order, actor } = await labOrder(request, params.id);
  const messages = await viewThread(actor.user.id, actor.membership.organisation.id, orderThread(order));
  const [title, clientName, samples, shipment, timeline, missingChecks, receipts, toConfirm] = await Promise.all([
    requestTitleOf(order.requestId),
    organisationNameOf(order.clientOrganisationId),
    orderSamples(order),
    shipmentOf(order.id),
    orderTimeline(order.id),
    order.state === "measuring" ? samplesWithoutCompletedCheck(order.id) : Promise.resolve([]),
    receiptsOf(order),
    order.state === "measuring" ? scansToConfirm(order.id) : Promise.resolve([]),
  ]);
  return {
    messages,
    order: { id: order.id, number: order.number, state: order.state, amountMinor: order.amountMinor, currency: order.currency },
    purchaseOrder: await purchaseOrderView(order),
    title: title ?? "",
    clientName: clientName ?? "",
    samples,
    // The safety data sheets open from the order too: the lab checks the parcel against them on arrival.
    sds: await sdsLinks(samples),
    shipment,
    timeline,
    missingChecks,
    dispute: ["disputed", "resolved"].includes(order.state) ? await disputeCase(order.id) : null,
    receipts,
    toConfirm,
    due: { at: order.dueAt?.toISOString() ?? null, ...dueStatus(order.dueAt, order.state) },
    documents: await orderDocumentLinks(order.id),
  };
}

const note = z.string().trim().max(1000).optional();

const ReceiptRecord = z.object({
  sampleId: z.string(),
  condition: z.enum(RECEIPT_CONDITIONS, { error: "Choose the sample's condition." }),
  sealIntact: z.enum(["yes", "no"], { error: "Say whether the seal is intact." }),
  amount: z.coerce.number({ error: "Give the amount as a number." }).positive("The amount received must be more than zero.").max(1e6).optional(),
  amountUnit: z.enum(AMOUNT_UNITS).optional(),
  storagePlace: z.string().trim().max(200).optional(),
  photoKey: z.string().max(500).optional(),
  photoName: z.string().max(255).optional(),
  photoSha256: z.string().max(64).optional(),
  note,
});

const LabMove = z.discriminatedUnion("intent", [
  z.object({ intent: z.literal("received"), note, records: z.array(ReceiptRecord).max(200).optional() }),
  z.object({
    intent: z.literal("refuse"),
    reason: z
      .string({ error: "Say why the parcel is refused." })
      .trim()
      .min(10, "Say in a sentence why the parcel is refused (at least 10 characters).")
      .max(2000),
    refused: z
      .array(z.object({ sampleId: z.string(), reason: z.enum(REFUSAL_REASONS, { error: "Choose a reason from the list." }).optional() }))
      .max(200)
      .optional(),
  }),
  z.object({ intent: z.literal("measuring"), note }),
  z.object({ intent: z.literal("delivered"), note, [CONFIRM_FIELD]: z.string().optional() }),
]);

export async function action({ request, params }: Route.ActionArgs) {
  const { actor, order } = await labOrder(request, params.id);
  const samples = await orderSamples(order);
  const submission = parseWithZod(await readForm(request), { schema: LabMove });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  const v = submission.value;
  const back = `/lab/orders/${order.id}`;
  try {
    if (v.intent === "received") {
      const records = (v.records ?? []).map((r) => ({
        sampleId: r.sampleId,
        condition: r.condition,
        sealIntact: r.sealIntact === "yes",
        amount: r.amount ?? null,
        amountUnit: r.amountUnit ?? null,
        storagePlace: r.storagePlace ?? "",
        note: r.note ?? "",
        photo: r.photoKey ? { storageKey: r.photoKey, fileName: r.photoName ?? "photo", sha256: r.photoSha256 } : null,
      }));
      await markReceived(order.id, actor.user.id, v.note ?? "", records);
    }
    if (v.intent === "measuring") await startMeasuring(order.id, actor.user.id, v.note ?? "");
    if (v.intent === "delivered") await markDelivered(order.id, actor.user.id, v.note ?? "", { confirmed: v[CONFIRM_FIELD] === "yes" });
    if (v.intent === "refuse") {
      const refused = (v.refused ?? []).flatMap((r) => (r.reason ? [{ sampleId: r.sampleId, reason: r.reason }] : []));
      if (samples.length > 0 && refused.length === 0) {
        return data({ result: submission.reply({ formErrors: ["Choose the reason for each refused sample (at least one)."] }) }, { status: 400 });
      }
      await refuseOnArrival(order.id, actor.user.id, v.reason, refused);
      return redirectWithToast(back, { kind: "info", message: "Parcel refused. The client is refunded minus the handling fee." });
    }
  } catch (err) {
    if (err instanceof OrderMoveRefused || err instanceof PaymentProblem)
      return data({ result: submission.reply({ formErrors: [err.message] }) }, { status: 409 });
    throw err;
  }
  return redirectWithToast(back, { kind: "success", message: "Order updated." });
}

export default function LabOrder({ loaderData, actionData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { order, title, clientName, samples, sds, shipment, timeline, missingChecks, dispute, receipts, toConfirm, due, purchaseOrder } = loaderData;
  const busy = useNavigation().state !== "idle";
  return (
    <div>
      <p className="mb-2 text-sm">
        <Link to="/lab/work-queue" className="text-beam-700 underline">
          ← Work queue
        </Link>
      </p>
      <PageHeader
        title={title}
        subtitle={`Order ${order.number} · for ${clientName} · ${fmt.money(order.amountMinor, order.currency)}`}
        actions={<OrderStateBadge state={order.state} />}
      />
      {purchaseOrder.number ? (
        <dl className="mb-4 grid grid-cols-[auto_1fr] gap-x-3 text-sm" aria-label="Purchase order">
          <PurchaseOrderFacts po={purchaseOrder} />
        </dl>
      ) : null}
      {/* The form's sentence and any field's (the receipt records' fields are many; their sentences show here together). */}
      <FormError errors={[...new Set(Object.values(actionData?.result?.error ?? {}).flat())].filter((e): e is string => typeof e === "string" && !!e)} />
      <DueLine due={due} />
      <OrderDocuments documents={loaderData.documents} currency={order.currency} />
      <div className="grid gap-6 lg:grid-cols-[1fr_20rem]">
        <div className="space-y-6">
          <section className="card" aria-labelledby="lab-next">
            <h2 id="lab-next" className="text-lg font-semibold">
              Next step
            </h2>
            {canMove(order.state, "samples_received", "lab") ? (
              <div className="mt-3 space-y-4">
                <p className="text-sm text-ink-700">
                  {shipment ? `Shipped with ${shipment.carrier}, tracking ${shipment.trackingNumber}. ` : ""}When the parcel arrives, check it against the
                  declaration below before accepting it.
                </p>
                <Form method="post" className="space-y-3" aria-label="Receipt record">
                  <h3 className="font-semibold">Receipt record</h3>
                  <p className="text-xs text-ink-600">
                    One record per sample: its condition, the seal, how much arrived and where it is kept. The client reads this record; the turnaround (the due
                    date) starts now.
                  </p>
                  <ReceiptFields orderId={order.id} samples={samples.map((s) => ({ id: s.id, label: s.label }))} />
                  <div>
                    <label htmlFor="received-note" className="label">
                      Note for the timeline (optional)
                    </label>
                    <textarea id="received-note" name="note" rows={2} className="input" maxLength={1000} />
                  </div>
                  <button type="submit" name="intent" value="received" className="btn-primary" disabled={busy}>
                    Mark samples received
                  </button>
                </Form>
                <Form method="post" className="space-y-2 border-t border-ink-100 pt-4" aria-label="Refusal on arrival">
                  <h3 className="font-semibold">Refuse on arrival</h3>
                  <RefusalFields samples={samples.map((s) => ({ id: s.id, label: s.label }))} />
                  <label htmlFor="refuse-reason" className="label">
                    Refuse on arrival — why does the parcel not match its declaration?
                  </label>
                  <textarea id="refuse-reason" name="reason" rows={2} className="input" />
                  <button type="submit" name="intent" value="refuse" className="btn-danger" disabled={busy}>
                    Refuse the parcel
                  </button>
                </Form>
              </div>
            ) : canMove(order.state, "measuring", "lab") ? (
              <Form method="post" className="mt-3 space-y-2">
                <label htmlFor="measuring-note" className="label">
                  Note for the timeline (optional)
                </label>
                <textarea id="measuring-note" name="note" rows={2} className="input" maxLength={1000} />
                <button type="submit" name="intent" value="measuring" className="btn-primary" disabled={busy}>
                  Start measuring
                </button>
              </Form>
            ) : canMove(order.state, "data_delivered", "lab") ? (
              <div className="mt-3 space-y-3">
                <p className="text-sm text-ink-700">
                  Upload the scans (one or more per sample) and your report. Each scan is checked automatically; the data can be delivered once every sample has
                  a completed check.
                </p>
                <Link to={`/lab/orders/${order.id}/files`} className="btn-secondary">
                  Upload delivery files
                </Link>
                {missingChecks.length ? <p className="text-sm text-caution-700">Still without a completed check: {missingChecks.join(", ")}.</p> : null}
                <Form method="post" className="space-y-2">
                  <VerdictConfirmation files={toConfirm} move="deliver" />
                  <label htmlFor="delivered-note" className="label">
                    Note for the timeline (optional)
                  </label>
                  <textarea id="delivered-note" name="note" rows={2} className="input" maxLength={1000} />
                  <button type="submit" name="intent" value="delivered" className="btn-primary" disabled={busy || missingChecks.length > 0}>
                    Mark data delivered
                  </button>
                </Form>
              </div>
            ) : (
              <p className="mt-3 text-sm text-ink-700">
                {order.state === "awaiting_payment" && "Waiting for the client's payment."}
                {order.state === "funds_held" && "The client has paid; the money is held. Waiting for the samples to be shipped."}
                {order.state === "data_delivered" && "Delivered. The client reviews the data; you are paid when they accept or the review window lapses."}
                {["accepted", "paid_out"].includes(order.state) && "Accepted by the client; see Payouts."}
                {order.state === "disputed" && "The client opened a dispute; answer it below with the lab's statement and evidence. An admin will decide."}
                {["cancelled", "refused_on_arrival", "resolved"].includes(order.state) && "This order is closed."}
              </p>
            )}
            {samplesAtLab(order.state) ? (
              <p className="mt-4 text-sm">
                <Link to={`/lab/orders/${order.id}/files`} className="text-beam-700 underline">
                  Delivery files and checks
                </Link>
              </p>
            ) : null}
          </section>
          {dispute ? <DisputePanel orderId={order.id} side="lab" dispute={dispute} /> : null}
          <ReceiptRecordCard rows={receipts} />
          <section className="card" aria-labelledby="lab-samples">
            <h2 id="lab-samples" className="mb-3 text-lg font-semibold">
              Samples and their hazard declarations
            </h2>
            <OrderSamples samples={samples} sds={sds} />
          </section>
        </div>
        <OrderTimelineCard rows={timeline} />
      </div>
      <OrderThread orderId={loaderData.order.id} yourSide="lab" otherName={loaderData.clientName} view={loaderData.messages} />
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Order — Diffractory" },
    { name: "description", content: "An order from your lab's side: samples and hazards, the shipment, messages with the client and the next moves." },
  ];
}
