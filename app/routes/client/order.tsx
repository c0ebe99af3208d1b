// /client/orders/:id — the client's view of an order: payment, timeline, cancel, accept or dispute.
import { Formula } from "~/components/symbols";
import { OrderThread } from "~/components/message-thread";
import { orderThread, viewThread } from "~/models/messages/messages.server";
import { requireOrderSide } from "~/utils/permissions.server";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import { z } from "zod";
import { OrderTimelineCard } from "~/components/order-timeline";
import { SampleFacts } from "~/components/request-parts";
import { FormError, PageHeader } from "~/components/ui";
import { canMove, samplesAtLab } from "~/domain/order-states";
import { OrderStateBadge } from "~/components/order-state-badge";
import { organisationNameOf } from "~/models/accounts/organisations.server";
import { requestTitleOf } from "~/models/requests/requests.server";
import { orderSamples } from "~/models/files/files.server";
import { disputeOf, latestPaymentOf, orderStateOf, orderTimeline } from "~/models/orders/queries.server";
import { OrderMoveRefused } from "~/models/orders/lifecycle.server";
import { markShipped } from "~/models/orders/lifecycle.server";
import { shipmentOf } from "~/models/orders/queries.server";
import { defaultAddressOf } from "~/models/accounts/profiles.server";
import { ParcelAddress } from "~/components/parcel-address";
import { acceptDelivery, cancelOrder, openDispute, PAYOUT_DELAYED } from "~/models/orders/lifecycle.server";
import { PaymentProblem } from "~/models/payments/provider.server";
import { startCheckout } from "~/models/payments/checkout.server";
import { closeOpenTransfers, startBankTransfer, transferViewOf } from "~/models/payments/bank-transfer.server";
import { BankTransferDetails } from "~/components/bank-transfer";
import { redirectWithToast } from "~/utils/toast.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/order";
import { useFormat } from "~/components/locale";
import { DisputePanel } from "~/components/dispute-panel";
import { disputeCase as disputeCaseOf } from "~/models/orders/disputes.server";
import { DueLine, ReceiptRecordCard, VerdictConfirmation } from "~/components/lab-records";
import { receiptsOf, scansToConfirm } from "~/models/orders/lab-records.server";
import { orderDocumentLinks } from "~/models/invoices/invoices.server";
import { OrderDocuments } from "~/components/order-documents";
import { dueStatus } from "~/domain/receipt";
import { CONFIRM_FIELD } from "~/domain/verdict-confirmation";
import { PurchaseOrderFacts, PurchaseOrderFields } from "~/components/purchase-order-fields";
import { purchaseOrderInputFrom, purchaseOrderView, requiresPurchaseOrder, setOrderPurchaseOrder } from "~/models/orders/purchase-orders.server";

const clientOrder = (request: Request, orderId: string) => requireOrderSide(request, "client", orderId);

export async function loader({ request, params }: Route.LoaderArgs) {
  const { order, actor } = await clientOrder(request, params.id);
  const messages = await viewThread(actor.user.id, actor.membership.organisation.id, orderThread(order));
  const [title, labName, payment, timeline, samples] = await Promise.all([
    requestTitleOf(order.requestId),
    organisationNameOf(order.labId),
    latestPaymentOf(order.id),
    orderTimeline(order.id),
    orderSamples(order),
  ]);
  const dispute = await disputeOf(order.id);
  const [receipts, toConfirm] = await Promise.all([receiptsOf(order), order.state === "data_delivered" ? scansToConfirm(order.id) : Promise.resolve([])]);
  const shipment = await shipmentOf(order.id);
  const transfer = await transferViewOf(order.id);
  // Where the parcel goes, while the client still ships it.
  const receiving = canMove(order.state, "samples_in_transit", "client") ? await defaultAddressOf(order.labId, "receiving") : undefined;
  return {
    receiving: receiving ?? null,
    messages,
    purchaseOrder: {
      ...(await purchaseOrderView(order)),
      editable: order.state === "awaiting_payment",
      required: await requiresPurchaseOrder(order.clientOrganisationId),
    },
    order: {
      id: order.id,
      number: order.number,
      state: order.state,
      amountMinor: order.amountMinor,
      currency: order.currency,
      reviewWindowDays: order.reviewWindowDays,
      deliveredAt: order.deliveredAt,
      // A lot of a standing agreement links back to it; any other order may become one (docs/design.md#standing-agreements).
      agreementId: order.agreementId,
    },
    request: title === null ? undefined : { id: order.requestId, title },
    labName: labName ?? "",
    declined: order.state === "awaiting_payment" && payment?.method !== "bank_transfer" && payment?.lastError ? payment.lastError : null,
    // Bank transfer is offered for quotes in euros (the provider's EU transfers, docs/design.md#bank-transfer).
    transfer,
    transferOffered: order.currency.toUpperCase() === "EUR",
    dispute: dispute ? { state: dispute.state, reason: dispute.reason, decisionReason: dispute.decisionReason } : null,
    cancelledPayment: new URL(request.url).searchParams.get("payment") === "cancelled",
    shipment: shipment ? { carrier: shipment.carrier, trackingNumber: shipment.trackingNumber } : null,
    timeline,
    // What each sample's scans are checked against: its main phase and cell, further phases, candidates and window.
    samples: samples.map(({ sdsStorageKey: _key, ...s }) => s),
    disputeCase: dispute ? await disputeCaseOf(order.id) : null,
    receipts,
    toConfirm,
    due: { at: order.dueAt?.toISOString() ?? null, ...dueStatus(order.dueAt, order.state) },
    documents: await orderDocumentLinks(order.id),
  };
}

const OrderAction = z.discriminatedUnion("intent", [
  z.object({ intent: z.literal("pay") }),
  z.object({ intent: z.literal("transfer") }),
  z.object({ intent: z.literal("cancel"), reason: z.string().trim().max(500).optional() }),
  z.object({ intent: z.literal("accept"), [CONFIRM_FIELD]: z.string().optional() }),
  z.object({
    intent: z.literal("ship"),
    carrier: z.string({ error: "Name the carrier." }).trim().min(2, "Name the carrier.").max(80),
    trackingNumber: z
      .string({ error: "Give the tracking number." })
      .trim()
      .regex(/^[A-Za-z0-9][A-Za-z0-9 -]{3,40}$/, "A tracking number has 4–40 letters, digits, spaces or dashes."),
  }),
  z.object({
    intent: z.literal("dispute"),
    reason: z
      .string({ error: "Say what is wrong with the delivery." })
      .trim()
      .min(10, "Say in a sentence or two what is wrong (at least 10 characters).")
      .max(2000),
  }),
]);

export async function action({ request, params }: Route.ActionArgs) {
  const { actor, order } = await clientOrder(request, params.id);
  const form = await readForm(request);
  if (form.get("intent") === "purchase-order") {
    // Added or corrected until the order is paid; the same checks as on acceptance.
    const saved = await setOrderPurchaseOrder(order, actor.user.id, purchaseOrderInputFrom(form));
    if (saved.error) return data({ result: undefined, poError: saved.error }, { status: 400 });
    return redirectWithToast(`/client/orders/${order.id}`, { kind: "success", message: "Purchase order saved." });
  }
  const submission = parseWithZod(form, { schema: OrderAction });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  const v = submission.value;
  try {
    if (v.intent === "pay") return redirect(await startCheckout(order.id, { userId: actor.user.id, email: actor.user.email }));
    if (v.intent === "transfer") {
      await startBankTransfer(order.id, { userId: actor.user.id });
      return redirectWithToast(`/client/orders/${order.id}`, {
        kind: "success",
        message: "Bank details are ready below. Use the reference exactly as shown so the transfer finds this order.",
      });
    }
    if (v.intent === "cancel") {
      await cancelOrder(order.id, "client", actor.user.id, v.reason || "Cancelled by the client.");
      // A transfer still waiting for money is closed; anything that had arrived goes back to the sender.
      await closeOpenTransfers(order.id);
      return redirectWithToast(`/client/orders/${order.id}`, { kind: "info", message: "The order is cancelled; anything paid is refunded in full." });
    }
    if (v.intent === "ship") {
      await markShipped(order.id, actor.user.id, v.carrier, v.trackingNumber);
      return redirectWithToast(`/client/orders/${order.id}`, {
        kind: "success",
        message: "Marked shipped. The lab checks the parcel against its declaration on arrival.",
      });
    }
    if (v.intent === "accept") {
      try {
        await acceptDelivery(order.id, "client", actor.user.id, { confirmed: v[CONFIRM_FIELD] === "yes" });
      } catch (err) {
        // The acceptance is committed before the payout is asked for; when only the payout failed, say so.
        if (!(err instanceof PaymentProblem) || err.status !== 503) throw err;
        if ((await orderStateOf(order.id)) !== "accepted") throw err;
        return redirectWithToast(`/client/orders/${order.id}`, { kind: "info", message: PAYOUT_DELAYED });
      }
      return redirectWithToast(`/client/orders/${order.id}`, { kind: "success", message: "Delivery accepted; the lab is being paid." });
    }
    await openDispute(order.id, actor.user.id, v.reason);
    return redirectWithToast(`/client/orders/${order.id}`, { kind: "info", message: "Dispute opened. The money stays held until an admin decides." });
  } catch (err) {
    if (err instanceof PaymentProblem || err instanceof OrderMoveRefused) {
      return data({ result: submission.reply({ formErrors: [err.message] }) }, { status: err.status === 503 ? 503 : 409 });
    }
    throw err;
  }
}

export default function ClientOrder({ loaderData, actionData }: Route.ComponentProps) {
  const fmt = useFormat();
  const {
    order,
    request,
    labName,
    declined,
    dispute,
    cancelledPayment,
    shipment,
    timeline,
    samples,
    disputeCase,
    receipts,
    toConfirm,
    due,
    purchaseOrder,
    transfer,
    transferOffered,
  } = loaderData;
  const navigation = useNavigation();
  const busy = navigation.state !== "idle";
  const canCancel = canMove(order.state, "cancelled", "client");
  return (
    <div>
      <p className="mb-2 text-sm">
        <Link to={`/client/requests/${request?.id}`} className="text-beam-700 underline">
          ← <Formula>{request?.title ?? ""}</Formula>
        </Link>
      </p>
      <PageHeader
        title={`Order ${order.number} with ${labName}`}
        subtitle={fmt.money(order.amountMinor, order.currency)}
        actions={<OrderStateBadge state={order.state} />}
      />
      <FormError errors={actionData?.result?.error?.[""] as string[] | undefined} />
      <p className="mb-3 text-sm">
        {order.agreementId ? (
          <Link to={`/client/agreements/${order.agreementId}`} className="text-beam-700 underline">
            A lot of a standing agreement: open the agreement
          </Link>
        ) : order.state !== "cancelled" ? (
          <Link to={`/client/orders/${order.id}/agreement`} className="text-beam-700 underline">
            Make this a standing agreement for one of your materials
          </Link>
        ) : null}
      </p>
      <DueLine due={due} />
      <PurchaseOrderCard
        orderId={order.id}
        requestId={request?.id ?? ""}
        po={purchaseOrder}
        error={actionData && "poError" in actionData ? (actionData.poError ?? null) : null}
        busy={busy}
      />
      <OrderDocuments documents={loaderData.documents} currency={order.currency} />
      <div className="grid gap-6 lg:grid-cols-[1fr_20rem]">
        <section className="card" aria-labelledby="next-step">
          <h2 id="next-step" className="text-lg font-semibold">
            Next step
          </h2>
          {order.state === "awaiting_payment" ? (
            <div className="mt-3 space-y-3">
              <p className="text-sm text-ink-700">Pay the quote total. Diffractory holds it until you accept the delivered data; the lab is paid only then.</p>
              {declined ? (
                <p role="alert" className="rounded-lg border border-danger-600/30 bg-danger-50 p-3 text-sm text-danger-700">
                  The last payment attempt was declined: {declined}
                </p>
              ) : null}
              {cancelledPayment ? <p className="text-sm text-ink-600">You left the payment page; nothing was charged.</p> : null}
              {transfer?.status === "open" ? (
                <section aria-labelledby="pay-by-transfer" className="space-y-2">
                  {/* The card stays possible: paying by card closes the transfer and sends back anything received. */}
                  <h3 id="pay-by-transfer" className="font-semibold">
                    Pay by bank transfer
                  </h3>
                  <BankTransferDetails transfer={transfer} purchaseOrderNumber={purchaseOrder.number ?? null} />
                </section>
              ) : null}
              <Form method="post" className="flex flex-wrap gap-3">
                <button type="submit" name="intent" value="pay" className={transfer?.status === "open" ? "btn-secondary" : "btn-primary"} disabled={busy}>
                  {busy && navigation.formData?.get("intent") === "pay"
                    ? "Opening the payment page…"
                    : `Pay ${fmt.money(order.amountMinor, order.currency)}${transfer?.status === "open" ? " by card instead" : ""}`}
                </button>
                {transferOffered && transfer?.status !== "open" ? (
                  <button type="submit" name="intent" value="transfer" className="btn-secondary" disabled={busy}>
                    {busy && navigation.formData?.get("intent") === "transfer" ? "Asking for bank details…" : "Bank transfer instead"}
                  </button>
                ) : null}
              </Form>
              {transfer?.status === "open" ? (
                <p className="text-xs text-ink-600">
                  Paying by card closes the bank transfer; anything already transferred is sent back to the account it came from.
                </p>
              ) : null}
              {transferOffered && transfer?.status !== "open" ? (
                <p className="text-xs text-ink-600">
                  "Pay" opens the card payment page. A bank transfer takes one to two business days; the order waits until the money has arrived.
                </p>
              ) : null}
            </div>
          ) : canMove(order.state, "samples_in_transit", "client") ? (
            <div className="mt-3 space-y-3">
              <p className="text-sm text-ink-700">
                The money is held. Print the packing slip, put it in the parcel, ship the samples to the lab and mark them shipped.
              </p>
              <div className="rounded-md border border-ink-200 p-3">
                <p className="text-xs text-ink-600">Send the parcel to</p>
                <ParcelAddress
                  name={labName || "The lab"}
                  address={loaderData.receiving}
                  missing="The lab has not given a receiving address yet; ask in the messages below where to send the parcel."
                />
              </div>
              <Link to={`/client/orders/${order.id}/packing-slip`} className="btn-secondary">
                Packing slip
              </Link>
              <Form method="post" className="grid gap-3 sm:grid-cols-[1fr_1fr_auto] sm:items-end">
                <div>
                  <label htmlFor="carrier" className="label">
                    Carrier
                  </label>
                  <input id="carrier" name="carrier" className="input" aria-describedby="ship-errors" />
                </div>
                <div>
                  <label htmlFor="trackingNumber" className="label">
                    Tracking number
                  </label>
                  <input id="trackingNumber" name="trackingNumber" className="input" aria-describedby="ship-errors" />
                </div>
                <button type="submit" name="intent" value="ship" className="btn-primary" disabled={busy}>
                  Mark samples shipped
                </button>
                <p id="ship-errors" className="min-h-5 text-xs text-danger-700 sm:col-span-3">
                  {[
                    ...((actionData?.result?.error?.carrier as string[] | undefined) ?? []),
                    ...((actionData?.result?.error?.trackingNumber as string[] | undefined) ?? []),
                  ].join(" ")}
                </p>
              </Form>
            </div>
          ) : canMove(order.state, "accepted", "client") ? (
            <div className="mt-3 space-y-4">
              <p className="text-sm text-ink-700">
                The data is in your data room. Accept the delivery to pay the lab, or open a dispute. Without either, the delivery is accepted automatically{" "}
                {order.reviewWindowDays} days after it arrived.
              </p>
              <Form method="post" className="space-y-2">
                <VerdictConfirmation files={toConfirm} move="accept" />
                <button type="submit" name="intent" value="accept" className="btn-primary" disabled={busy}>
                  Accept delivery
                </button>
              </Form>
              <Form method="post" className="space-y-2">
                <label htmlFor="dispute-reason" className="label">
                  What is wrong with the delivery?
                </label>
                <textarea id="dispute-reason" name="reason" rows={3} className="input" />
                <button type="submit" name="intent" value="dispute" className="btn-secondary" disabled={busy}>
                  Open a dispute
                </button>
              </Form>
            </div>
          ) : (
            <p className="mt-3 text-sm text-ink-700">
              {order.state === "disputed" && `In dispute: ${dispute?.reason ?? ""}. An admin will decide.`}
              {order.state === "resolved" && `The dispute was decided: ${dispute?.decisionReason ?? ""}`}
              {order.state === "paid_out" && "Delivery accepted and the lab paid. The data stays in your data room."}
              {order.state === "cancelled" && "This order is cancelled."}
              {order.state === "refused_on_arrival" && "The lab refused the parcel on arrival; the payment was refunded minus the handling fee."}
              {["samples_in_transit", "samples_received", "measuring", "accepted"].includes(order.state) &&
                "The lab is working on it; the timeline shows each step."}
              {shipment ? ` Shipped with ${shipment.carrier}, tracking ${shipment.trackingNumber}.` : ""}
            </p>
          )}
          {/* From the samples' arrival on: files and their checks show up in the data room as the lab uploads them. */}
          {samplesAtLab(order.state) ? (
            <p className="mt-4 text-sm">
              <Link to={`/client/data-room/${order.id}`} className="font-semibold text-beam-700 underline">
                Open the data room
              </Link>
            </p>
          ) : null}
          {canCancel ? (
            <Form method="post" className="mt-6 border-t border-ink-100 pt-4">
              <input type="hidden" name="reason" value="Cancelled by the client before the samples arrived." />
              <button type="submit" name="intent" value="cancel" className="btn-quiet text-danger-700" disabled={busy}>
                Cancel the order{order.state !== "awaiting_payment" ? " (full refund)" : ""}
              </button>
            </Form>
          ) : null}
        </section>
        <OrderTimelineCard rows={timeline} />
      </div>
      {disputeCase ? (
        <div className="mt-6">
          <DisputePanel orderId={order.id} side="client" dispute={disputeCase} />
        </div>
      ) : null}
      {receipts.length ? (
        <div className="mt-6">
          <ReceiptRecordCard rows={receipts} />
        </div>
      ) : null}
      <section className="card mt-6" aria-labelledby="declared-samples">
        <h2 id="declared-samples" className="mb-3 text-lg font-semibold">
          Samples as declared
        </h2>
        <p className="mb-3 text-sm text-ink-600">Each delivered scan is checked against its sample's declaration below.</p>
        <div className="grid gap-4 lg:grid-cols-2">
          {samples.map((s) => (
            <article key={s.id} className="rounded-lg border border-ink-200 p-4" aria-label={`Sample ${s.label}`}>
              <h3 className="font-semibold">{s.label}</h3>
              <SampleFacts sample={s} />
            </article>
          ))}
        </div>
      </section>
      <OrderThread orderId={loaderData.order.id} yourSide="client" otherName={loaderData.labName} view={loaderData.messages} />
    </div>
  );
}

/** The purchase order: shown when set, and added or corrected by the client until the order is paid. */
function PurchaseOrderCard({
  orderId,
  requestId,
  po,
  error,
  busy,
}: {
  orderId: string;
  requestId: string;
  po: Route.ComponentProps["loaderData"]["purchaseOrder"];
  error: string | null;
  busy: boolean;
}) {
  if (!po.editable && !po.number) return null;
  return (
    <section className="card mb-6" aria-labelledby="purchase-order">
      <h2 id="purchase-order" className="text-lg font-semibold">
        Purchase order
      </h2>
      {po.number ? (
        <dl className="mt-2 grid grid-cols-[auto_1fr] gap-x-3 text-sm">
          <PurchaseOrderFacts po={po} />
        </dl>
      ) : (
        <p className="mt-2 text-sm text-ink-600">No purchase-order number on this order.</p>
      )}
      {po.editable ? (
        <Form method="post" className="mt-3 space-y-2" key={po.number ?? ""}>
          <p className="text-sm text-ink-600">Add or correct the purchase order until the order is paid.</p>
          <PurchaseOrderFields id={`po-order-${orderId}`} requestId={requestId} required={po.required} defaultNumber={po.number} fileOnRecord={po.fileName} />
          {error ? (
            <p role="alert" className="text-sm text-danger-700">
              {error}
            </p>
          ) : null}
          <button type="submit" name="intent" value="purchase-order" className="btn-secondary" disabled={busy}>
            Save the purchase order
          </button>
        </Form>
      ) : null}
    </section>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Order — Diffractory" },
    { name: "description", content: "An order from your side: payment, timeline, messages with the lab, and accepting or disputing the delivery." },
  ];
}
