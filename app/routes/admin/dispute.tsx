// /admin/disputes/:id — one dispute (by its order): both statements with their evidence, the order's files with
// their checks (and one check's plot on request, audit-logged), the order's timeline and the decision in money.
// See docs/design.md#disputes.
import { Formula } from "~/components/symbols";
import { parseWithZod } from "@conform-to/zod/v4";
import { useMemo, useState } from "react";
import { data, Form, Link, useNavigation } from "react-router";
import { z } from "zod";
import { VerdictBadge } from "~/components/calibration-summary";
import { CheckPlot } from "~/components/check-plot";
import { checkPlotData } from "~/components/check-words";
import { DisputePanel } from "~/components/dispute-panel";
import { useFormat } from "~/components/locale";
import { OrderStateBadge } from "~/components/order-state-badge";
import { OrderTimeline } from "~/components/order-timeline";
import { Field, FormError, PageHeader } from "~/components/ui";
import type { Verdict } from "~/diffraction/verdict";
import { readStoredResult } from "~/domain/check-result";
import { platformFeeOnPart, toMajorText, toMinorUnits } from "~/domain/money";
import { checkWithOrder } from "~/models/checks/queries.server";
import { orderFileList } from "~/models/files/files.server";
import { resolveDispute } from "~/models/orders/lifecycle.server";
import { disputeCase, disputedOrder, logDisputeRead } from "~/models/orders/disputes.server";
import { heldMoneyOf, orderTimeline } from "~/models/orders/queries.server";
import { organisationNameOf } from "~/models/accounts/organisations.server";
import { PaymentProblem } from "~/models/payments/provider.server";
import { requestTitleOf } from "~/models/requests/requests.server";
import { orderThreadMessages } from "~/models/messages/messages.server";
import { readForm } from "~/utils/form.server";
import { notFound, requireAdmin } from "~/utils/permissions.server";
import { redirectWithToast } from "~/utils/toast.server";
import type { Route } from "./+types/dispute";

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const admin = await requireAdmin(request);
  const order = await disputedOrder(params.id);
  const dispute = order ? await disputeCase(order.id) : null;
  if (!order || !dispute) notFound("No such dispute.");
  const [title, clientName, labName, files, timeline, heldMinor, thread] = await Promise.all([
    requestTitleOf(order.requestId),
    organisationNameOf(order.clientOrganisationId),
    organisationNameOf(order.labId),
    orderFileList(order.id, { side: "lab" }),
    orderTimeline(order.id),
    heldMoneyOf(order.id),
    orderThreadMessages(order.id),
  ]);
  // The order's thread is part of the evidence: the admin reads it here only, and the read is audit-logged.
  if (thread.length > 0) await logDisputeRead(admin.user.id, order, { type: "order", id: order.id, what: "message thread" }, context.clientAddress);
  // One check's plot, on request: reading the result is a read of the data room, so it is audit-logged.
  const plotId = new URL(request.url).searchParams.get("plot");
  let plot: { checkId: string; fileName: string; result: ReturnType<typeof readStoredResult> } | null = null;
  if (plotId) {
    const found = await checkWithOrder(plotId);
    if (found && found.file.orderId === order.id && found.check.status === "done" && found.check.result) {
      await logDisputeRead(
        admin.user.id,
        order,
        { type: "check", id: found.check.id, what: `plot on the dispute page of ${found.file.name} v${found.file.version}` },
        context.clientAddress,
      );
      plot = { checkId: found.check.id, fileName: `${found.file.name} v${found.file.version}`, result: readStoredResult(found.check.result) };
    }
  }
  return {
    order: {
      id: order.id,
      number: order.number,
      state: order.state,
      amountMinor: order.amountMinor,
      currency: order.currency,
      feeBps: order.platformFeeBps,
      taxMinor: order.taxMinor,
    },
    title: title ?? "Order",
    clientName: clientName ?? "",
    labName: labName ?? "",
    dispute,
    heldMinor,
    files: files
      .filter((f) => f.state === "stored")
      .map((f) => ({
        id: f.id,
        name: f.name,
        version: f.version,
        kind: f.kind,
        sampleLabel: f.sampleLabel,
        deleted: !!f.deletedAt,
        check: f.check ? { id: f.check.id, status: f.check.status, verdict: f.check.verdict as Verdict | null } : null,
      })),
    timeline: timeline.map((e) => ({ ...e, at: e.at.toISOString() })),
    thread: thread.map((m) => ({
      id: m.id,
      body: m.body,
      at: m.at.toISOString(),
      who: `${m.authorName} · ${m.authorOrganisationName} (${m.side})`,
      attachment: m.attachment?.name ?? null,
    })),
    plot,
  };
}

const Decision = z.object({
  refund: z.string({ error: "Enter the refund to the client (0 for none)." }).refine((v) => toMinorUnits(v) !== null, "Enter an amount like 120.00."),
  reason: z.string({ error: "Write the reason for the decision." }).trim().min(10, "Write the reason in a sentence (at least 10 characters).").max(2000),
});

export async function action({ request, params, context }: Route.ActionArgs) {
  const admin = await requireAdmin(request);
  const order = await disputedOrder(params.id);
  if (!order) notFound("No such dispute.");
  const submission = parseWithZod(await readForm(request), { schema: Decision });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  const { refund, reason } = submission.value;
  try {
    await resolveDispute(order.id, { userId: admin.user.id, clientAddress: context.clientAddress }, toMinorUnits(refund)!, reason);
  } catch (err) {
    if (err instanceof PaymentProblem) return data({ result: submission.reply({ formErrors: [err.message] }) }, { status: err.status === 400 ? 400 : 409 });
    throw err;
  }
  return redirectWithToast(`/admin/disputes/${order.id}`, { kind: "success", message: "Dispute decided; the refund and payout are under way." });
}

/** What a refund typed as money leaves the lab, after the platform fee on the lab's part; null while unreadable. */
function splitOf(refundText: string, heldMinor: number, order: { amountMinor: number; taxMinor: number; feeBps: number }) {
  const refund = toMinorUnits(refundText);
  if (refund === null || refund > heldMinor) return null;
  const labPart = heldMinor - refund;
  const fee = platformFeeOnPart(labPart, { amountMinor: order.amountMinor, taxMinor: order.taxMinor, platformFeeBps: order.feeBps });
  return { refund, payout: labPart - fee, fee };
}

export default function DisputeScreen({ loaderData, actionData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { order, title, clientName, labName, dispute, heldMinor, files, timeline, plot, thread } = loaderData;
  const busy = useNavigation().state !== "idle";
  const [refundText, setRefundText] = useState("");
  const split = splitOf(refundText, heldMinor, order);
  const plotData = useMemo(() => (plot ? checkPlotData(plot.result) : null), [plot]);
  const errors = actionData?.result.error ?? {};
  return (
    <div className="space-y-6">
      <p className="text-sm">
        <Link to="/admin/disputes" className="text-beam-700 underline">
          ← All disputes
        </Link>
      </p>
      <PageHeader
        title={`Dispute on order ${order.number}`}
        subtitle={
          <>
            <Formula>{title}</Formula>
            {` — ${clientName} and ${labName} · order total ${fmt.money(order.amountMinor, order.currency)} · held ${fmt.money(heldMinor, order.currency)}`}
          </>
        }
        actions={<OrderStateBadge state={order.state} />}
      />
      <DisputePanel orderId={order.id} side="admin" dispute={dispute} />
      <section className="card" aria-labelledby="thread-heading">
        <h2 id="thread-heading" className="text-lg font-semibold">
          Messages on the order
        </h2>
        {thread.length === 0 ? (
          <p className="mt-2 text-sm text-ink-600">The client and the lab exchanged no messages on this order.</p>
        ) : (
          <ol className="mt-3 space-y-3 text-sm" aria-label="Messages on the order">
            {thread.map((m) => (
              <li key={m.id} className="rounded-lg border border-ink-200 p-3">
                <p className="text-xs text-ink-500">
                  <span className="font-semibold text-ink-700">{m.who}</span> · {fmt.dateTime(m.at)}
                </p>
                <p className="mt-1 whitespace-pre-wrap">{m.body}</p>
                {m.attachment ? <p className="mt-1 text-xs text-ink-600">Attachment: {m.attachment}</p> : null}
              </li>
            ))}
          </ol>
        )}
      </section>
      <section className="card" aria-labelledby="files-heading">
        <h2 id="files-heading" className="text-lg font-semibold">
          Delivered files and their checks
        </h2>
        <p className="mt-1 text-xs text-ink-600">Each file, check and plot you open here is written to the audit log.</p>
        {files.length === 0 ? (
          <p className="mt-2 text-sm text-ink-600">No files delivered.</p>
        ) : (
          <ul className="mt-3 divide-y divide-ink-100 text-sm" aria-label="Delivered files">
            {files.map((f) => (
              <li key={f.id} className="flex flex-wrap items-center gap-x-3 gap-y-1 py-2">
                <a href={`/files/${f.id}/download`} className="font-mono text-xs text-beam-700 underline">
                  {f.name} v{f.version}
                </a>
                {f.sampleLabel ? <span className="text-xs text-ink-600">sample {f.sampleLabel}</span> : null}
                {f.deleted ? <span className="text-xs text-ink-600">(removed from the client&apos;s data room)</span> : null}
                {f.check?.verdict ? (
                  <VerdictBadge verdict={f.check.verdict} />
                ) : f.kind === "scan" ? (
                  <span className="text-xs text-ink-600">not checked</span>
                ) : null}
                {f.check ? (
                  <>
                    <Link to={`/checks/${f.check.id}`} className="text-xs font-medium text-beam-700 underline">
                      Open the check
                    </Link>
                    {f.check.status === "done" ? (
                      <Link to={`?plot=${f.check.id}`} preventScrollReset className="text-xs font-medium text-beam-700 underline">
                        Show the plot here
                      </Link>
                    ) : null}
                  </>
                ) : null}
              </li>
            ))}
          </ul>
        )}
        {plot && plotData ? (
          <div className="mt-4 space-y-2">
            <h3 className="text-sm font-semibold">Pattern of {plot.fileName}</h3>
            <CheckPlot data={plotData} height={300} label={`Observed scan of ${plot.fileName} with the fit, a tick row per phase and the difference curve`} />
          </div>
        ) : null}
      </section>
      <div className="grid gap-6 lg:grid-cols-[1fr_22rem]">
        <section className="card" aria-labelledby="decision-heading">
          <h2 id="decision-heading" className="text-lg font-semibold">
            Decision
          </h2>
          {dispute.state === "resolved" ? (
            <p className="mt-2 text-sm">
              Refunded {fmt.money(dispute.refundMinor ?? 0, order.currency)}, paid to the lab {fmt.money(dispute.payoutMinor ?? 0, order.currency)}
              {dispute.decidedAt ? ` on ${fmt.dateTime(dispute.decidedAt)}` : ""}. {dispute.decisionReason}
            </p>
          ) : (
            <Form method="post" aria-label={`Decision on order ${order.number}`} className="mt-3 space-y-3">
              <Field
                label={`Refund to the client, in ${order.currency}`}
                id="refund"
                errors={errors.refund}
                hint={`Between ${fmt.money(0, order.currency)} and the ${fmt.money(heldMinor, order.currency)} held; the rest goes to the lab minus the ${order.feeBps / 100} % platform fee.`}
              >
                <input
                  id="refund"
                  name="refund"
                  className="input max-w-48"
                  inputMode="decimal"
                  placeholder={toMajorText(Math.round(heldMinor / 2))}
                  value={refundText}
                  onChange={(e) => setRefundText(e.currentTarget.value)}
                  aria-invalid={errors.refund ? true : undefined}
                  aria-describedby="refund-error refund-split"
                />
              </Field>
              <p id="refund-split" className="text-sm text-ink-700" aria-live="polite">
                {split
                  ? `The client gets ${fmt.money(split.refund, order.currency)} back; the lab is paid ${fmt.money(split.payout, order.currency)} after the platform fee of ${fmt.money(split.fee, order.currency)}.`
                  : refundText.trim()
                    ? `Enter an amount up to ${fmt.money(heldMinor, order.currency)}.`
                    : ""}
              </p>
              <Field label="Reason for the decision" id="reason" errors={errors.reason}>
                <textarea
                  id="reason"
                  name="reason"
                  rows={3}
                  className="input"
                  aria-invalid={errors.reason ? true : undefined}
                  aria-describedby="reason-error"
                />
              </Field>
              <FormError errors={errors[""]} />
              <button type="submit" className="btn-primary" disabled={busy}>
                {busy ? "Settling…" : "Decide and settle"}
              </button>
            </Form>
          )}
        </section>
        <section className="card" aria-labelledby="timeline-heading">
          <h2 id="timeline-heading" className="mb-3 text-lg font-semibold">
            The order&apos;s timeline
          </h2>
          <OrderTimeline rows={timeline} />
        </section>
      </div>
    </div>
  );
}

export function meta({ data }: Route.MetaArgs) {
  return [
    { title: data ? `Dispute on order ${data.order.number} — Diffractory` : "Dispute — Diffractory" },
    {
      name: "description",
      content: "One dispute: both parties' statements and evidence, the order's files and lattice checks, its timeline and the decision.",
    },
  ];
}
