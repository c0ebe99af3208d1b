// /admin/disputes — open and settled disputes, open ones first, DISPUTES_PAGE_SIZE (20) to a page read in SQL, and the
// decision form for each open one: a split of the held money. An open dispute shows its order's whole timeline, a
// decided one its last few events; every dispute's page (/admin/disputes/:id) shows all of it.
import { parseWithZod } from "@conform-to/zod/v4";
import { useEffect } from "react";
import { data, Form, Link, useNavigation } from "react-router";
import { z } from "zod";
import { VerdictBadge } from "~/components/calibration-summary";
import type { Verdict } from "~/diffraction/verdict";
import { OrderTimeline } from "~/components/order-timeline";
import { Badge, EmptyState, Field, FormError, PageHeader } from "~/components/ui";
import { filesWithVerdicts } from "~/models/files/files.server";
import { DISPUTES_PAGE_SIZE, disputeCountsByState, disputesWithOrders, orderTimelines } from "~/models/orders/queries.server";
import { heldForOrders } from "~/models/payments/ledger.server";
import { toMinorUnits } from "~/domain/money";
import { PaymentProblem } from "~/models/payments/provider.server";
import { platformFeeOnPart } from "~/domain/money";
import { resolveDispute } from "~/models/orders/lifecycle.server";
import { requireAdmin } from "~/utils/permissions.server";
import { redirectWithToast } from "~/utils/toast.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/disputes";
import { useFormat } from "~/components/locale";
import { PageNav } from "~/components/data-table";
import { pageOf, readTableQuery, type TableSpec } from "~/utils/table";

const TABLE: TableSpec<"opened"> = { sorts: ["opened"], defaultSort: "opened", firstDir: { opened: "desc" }, pageSize: DISPUTES_PAGE_SIZE };
/** A decided dispute shows the last few events of its order's timeline here; its page shows the whole. */
const DECIDED_TIMELINE_EVENTS = 3;

export async function loader({ request }: Route.LoaderArgs) {
  await requireAdmin(request);
  const q = readTableQuery(request, TABLE);
  const counts = await disputeCountsByState();
  // Open disputes first, then decided ones, newest first; a page past the end shows the last page.
  const info = pageOf((counts.open ?? 0) + (counts.resolved ?? 0), q);
  const rows = await disputesWithOrders({ limit: info.pageSize, offset: info.offset, dir: q.dir });
  const orderIds = rows.map((r) => r.order.id);
  // The page's disputes only, in three queries: the lab's side (what it delivered, with each scan's check verdict),
  // the money still held, and the timelines with the lab's notes (whole for an open dispute, to decide it here).
  const [files, held, timelines] = await Promise.all([
    filesWithVerdicts(orderIds),
    heldForOrders(orderIds),
    orderTimelines(orderIds, { whole: rows.filter((r) => r.dispute.state === "open").map((r) => r.order.id), last: DECIDED_TIMELINE_EVENTS }),
  ]);
  const filesOf = new Map<string, { name: string; version: number; verdict: Verdict | null }[]>();
  for (const f of files) {
    const list = filesOf.get(f.orderId) ?? [];
    list.push({ name: f.name, version: f.version, verdict: f.verdict as Verdict | null });
    filesOf.set(f.orderId, list);
  }
  const disputes = rows.map((r) => {
    const heldMinor = held.get(r.order.id) ?? 0;
    const refundHalf = Math.round(heldMinor / 2);
    const timeline = timelines.get(r.order.id) ?? { rows: [], total: 0 };
    return {
      orderId: r.order.id,
      orderNumber: r.order.number,
      title: r.title,
      client: r.client,
      lab: r.lab,
      openedBy: r.openedBy,
      files: filesOf.get(r.order.id) ?? [],
      timeline: timeline.rows.map((e) => ({ ...e, at: e.at.toISOString() })),
      timelineEvents: timeline.total,
      state: r.dispute.state,
      reason: r.dispute.reason,
      labStatement: r.dispute.labStatement,
      openedAt: r.dispute.openedAt,
      currency: r.order.currency,
      amountMinor: r.order.amountMinor,
      heldMinor,
      feeBps: r.order.platformFeeBps,
      // What the lab would get from an even split, as an example beside the form.
      halfSplitPayoutMinor: heldMinor - refundHalf - platformFeeOnPart(heldMinor - refundHalf, r.order),
      decision:
        r.dispute.state === "resolved" ? { refundMinor: r.dispute.refundMinor, payoutMinor: r.dispute.payoutMinor, reason: r.dispute.decisionReason } : null,
    };
  });
  return { disputes, info, open: counts.open ?? 0, decided: counts.resolved ?? 0 };
}

const Decision = z.object({
  orderId: z.uuid({ error: "Choose a dispute." }),
  refund: z.string({ error: "Enter the refund to the client (0 for none)." }).refine((v) => toMinorUnits(v) !== null, "Enter an amount like 120.00."),
  reason: z.string({ error: "Write the reason for the decision." }).trim().min(10, "Write the reason in a sentence (at least 10 characters).").max(2000),
});

export async function action({ request, context }: Route.ActionArgs) {
  const admin = await requireAdmin(request);
  const submission = parseWithZod(await readForm(request), { schema: Decision });
  if (submission.status !== "success") return data({ orderId: String(submission.payload.orderId ?? ""), result: submission.reply() }, { status: 400 });
  const { orderId, refund, reason } = submission.value;
  try {
    await resolveDispute(orderId, { userId: admin.user.id, clientAddress: context.clientAddress }, toMinorUnits(refund)!, reason);
  } catch (err) {
    if (err instanceof PaymentProblem)
      return data({ orderId, result: submission.reply({ formErrors: [err.message] }) }, { status: err.status === 400 ? 400 : 409 });
    throw err;
  }
  // Back to the page the decision was made on (a page past the end shows the last one).
  const back = new URLSearchParams([...new URL(request.url).searchParams].filter(([k]) => ["page", "sort", "dir"].includes(k))).toString();
  return redirectWithToast(`/admin/disputes${back ? `?${back}` : ""}`, { kind: "success", message: "Dispute decided; the refund and payout are under way." });
}

export default function Disputes({ loaderData, actionData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { disputes, info, open, decided } = loaderData;
  const navigation = useNavigation();
  const busy = navigation.state !== "idle";
  const settling = busy ? navigation.formData?.get("orderId") : null;
  // Errors belong to the dispute whose form was sent.
  const errorsFor = (orderId: string) => (actionData?.orderId === orderId ? (actionData.result.error ?? {}) : {});
  // A refused decision puts the keyboard on the first field to correct.
  useEffect(() => {
    if (actionData?.orderId) document.getElementById(`decide-${actionData.orderId}`)?.querySelector<HTMLElement>('[aria-invalid="true"]')?.focus();
  }, [actionData]);
  return (
    <div>
      <PageHeader
        title="Disputes"
        subtitle={`The money of a disputed order stays held until you decide how to split it. ${fmt.number(open)} open, ${fmt.number(decided)} decided.`}
      />
      {disputes.length === 0 ? (
        <EmptyState title="No disputes">Disputes opened by clients on delivered data appear here.</EmptyState>
      ) : (
        <ul className="space-y-4">
          {disputes.map((d) => (
            <li key={d.orderId} className="card" aria-labelledby={`dispute-${d.orderId}`}>
              <div className="flex flex-wrap items-baseline justify-between gap-2">
                <h2 id={`dispute-${d.orderId}`} className="font-semibold">
                  <Link to={`/admin/disputes/${d.orderId}`} className="text-beam-700 underline">
                    Order {d.orderNumber}
                  </Link>{" "}
                  · {d.title} — {d.client} and {d.lab}
                </h2>
                <Badge tone={d.state === "open" ? "danger" : "neutral"}>{d.state === "open" ? "Open" : "Decided"}</Badge>
              </div>
              <div className="mt-3 grid gap-4 md:grid-cols-2">
                <section aria-labelledby={`client-side-${d.orderId}`} className="rounded-lg border border-ink-200 p-4">
                  <h3 id={`client-side-${d.orderId}`} className="text-sm font-semibold text-ink-800">
                    Client: {d.client}
                  </h3>
                  <blockquote className="mt-2 border-l-4 border-ink-200 pl-3 text-sm text-ink-700">{d.reason}</blockquote>
                  <p className="mt-1 text-xs text-ink-600">Opened by {d.openedBy ?? "a former member"}</p>
                </section>
                <section aria-labelledby={`lab-side-${d.orderId}`} className="rounded-lg border border-ink-200 p-4">
                  <h3 id={`lab-side-${d.orderId}`} className="text-sm font-semibold text-ink-800">
                    Lab: {d.lab}
                  </h3>
                  {d.labStatement ? (
                    <blockquote className="mt-2 border-l-4 border-ink-200 pl-3 text-sm text-ink-700">{d.labStatement}</blockquote>
                  ) : (
                    <p className="mt-2 text-xs text-ink-600">{d.state === "open" ? "The lab has not answered yet." : "The lab gave no statement."}</p>
                  )}
                  {d.files.length ? (
                    <ul className="mt-2 space-y-1 text-sm" aria-label="Delivered files and their checks">
                      {d.files.map((f) => (
                        <li key={`${f.name}-${f.version}`} className="flex flex-wrap items-center gap-2">
                          <span className="font-mono text-xs">
                            {f.name} v{f.version}
                          </span>
                          {f.verdict ? <VerdictBadge verdict={f.verdict} /> : <span className="text-xs text-ink-600">not checked</span>}
                        </li>
                      ))}
                    </ul>
                  ) : (
                    <p className="mt-2 text-sm text-ink-600">No files delivered.</p>
                  )}
                  <details className="mt-3 text-sm">
                    <summary className="cursor-pointer font-medium text-beam-700">
                      {d.timeline.length < d.timelineEvents
                        ? `The last ${d.timeline.length} of ${d.timelineEvents} events on the order's timeline, with the lab's notes`
                        : "The order's timeline, with the lab's notes"}
                    </summary>
                    <div className="mt-3">
                      <OrderTimeline rows={d.timeline} />
                      {d.timeline.length < d.timelineEvents ? (
                        <Link to={`/admin/disputes/${d.orderId}`} className="mt-2 inline-block text-beam-700 underline">
                          The whole timeline on the dispute's page
                        </Link>
                      ) : null}
                    </div>
                  </details>
                </section>
              </div>
              <p className="mt-1 text-xs text-ink-500">
                Opened {fmt.dateTime(d.openedAt)} · order total {fmt.money(d.amountMinor, d.currency)} · held {fmt.money(d.heldMinor, d.currency)}
              </p>
              {d.decision ? (
                <p className="mt-3 text-sm">
                  Refunded {fmt.money(d.decision.refundMinor ?? 0, d.currency)}, paid to the lab {fmt.money(d.decision.payoutMinor ?? 0, d.currency)}.{" "}
                  {d.decision.reason}
                </p>
              ) : (
                <Form method="post" id={`decide-${d.orderId}`} aria-label={`Decision on ${d.title}`} className="mt-4 grid gap-3 sm:grid-cols-[12rem_1fr]">
                  <input type="hidden" name="orderId" value={d.orderId} />
                  <Field
                    label={`Refund to the client (${d.currency})`}
                    id={`refund-${d.orderId}`}
                    errors={errorsFor(d.orderId).refund}
                    hint={`The rest goes to the lab minus the ${d.feeBps / 100} % fee, e.g. a 50/50 split pays the lab ${fmt.money(d.halfSplitPayoutMinor, d.currency)}.`}
                  >
                    <input
                      id={`refund-${d.orderId}`}
                      name="refund"
                      className="input"
                      inputMode="decimal"
                      aria-invalid={errorsFor(d.orderId).refund ? true : undefined}
                      aria-describedby={`refund-${d.orderId}-error`}
                    />
                  </Field>
                  <Field label="Reason for the decision" id={`reason-${d.orderId}`} errors={errorsFor(d.orderId).reason}>
                    <textarea
                      id={`reason-${d.orderId}`}
                      name="reason"
                      rows={2}
                      className="input"
                      aria-invalid={errorsFor(d.orderId).reason ? true : undefined}
                      aria-describedby={`reason-${d.orderId}-error`}
                    />
                  </Field>
                  <div className="sm:col-span-2">
                    <FormError errors={errorsFor(d.orderId)[""]} />
                    <button type="submit" className="btn-primary" disabled={busy}>
                      {settling === d.orderId ? "Settling…" : "Decide and settle"}
                    </button>
                  </div>
                </Form>
              )}
            </li>
          ))}
        </ul>
      )}
      <PageNav info={info} noun={["dispute", "disputes"]} />
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Disputes — Diffractory" },
    { name: "description", content: "Open and settled disputes between clients and labs, and the decision on how the held money is split." },
  ];
}
