// /admin/disputes — open and settled disputes, and the decision form for one: a split of the held money.
import { parseWithZod } from "@conform-to/zod/v4";
import { desc, eq } from "drizzle-orm";
import { data, Form, useActionData, useLoaderData, useNavigation } from "react-router";
import { z } from "zod";
import { Badge, EmptyState, Field, FormError, PageHeader } from "~/components/ui";
import { db, schema } from "~/db/client.server";
import { heldForOrder } from "~/models/ledger.server";
import { toMinorUnits } from "~/models/money";
import { PaymentProblem, platformFee, resolveDispute } from "~/models/payments.server";
import { requireAdmin } from "~/utils/permissions.server";
import { redirectWithToast } from "~/utils/toast.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/disputes";
import { useFormat } from "~/components/locale";

export async function loader({ request }: Route.LoaderArgs) {
  await requireAdmin(request);
  const rows = await db
    .select({ dispute: schema.disputes, order: schema.orders, title: schema.requests.title, client: schema.organisations.name })
    .from(schema.disputes)
    .innerJoin(schema.orders, eq(schema.orders.id, schema.disputes.orderId))
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .innerJoin(schema.organisations, eq(schema.organisations.id, schema.orders.clientOrganisationId))
    .orderBy(desc(schema.disputes.openedAt));
  const disputes = await Promise.all(
    rows.map(async (r) => {
      const heldMinor = await heldForOrder(db, r.order.id);
      const refundHalf = Math.round(heldMinor / 2);
      return {
        orderId: r.order.id,
        title: r.title,
        client: r.client,
        state: r.dispute.state,
        reason: r.dispute.reason,
        openedAt: r.dispute.openedAt,
        currency: r.order.currency,
        amountMinor: r.order.amountMinor,
        heldMinor,
        feeBps: r.order.platformFeeBps,
        // What the lab would get from an even split, as an example beside the form.
        halfSplitPayoutMinor: heldMinor - refundHalf - platformFee(heldMinor - refundHalf, r.order.platformFeeBps),
        decision: r.dispute.state === "resolved" ? { refundMinor: r.dispute.refundMinor, payoutMinor: r.dispute.payoutMinor, reason: r.dispute.decisionReason } : null,
      };
    }),
  );
  return { disputes };
}

const Decision = z.object({
  orderId: z.uuid({ error: "Choose a dispute." }),
  refund: z.string({ error: "Enter the refund to the client (0 for none)." }).refine((v) => toMinorUnits(v) !== null, "Enter an amount like 120.00."),
  reason: z.string({ error: "Write the reason for the decision." }).trim().min(10, "Write the reason in a sentence (at least 10 characters).").max(2000),
});

export async function action({ request, context }: Route.ActionArgs) {
  const admin = await requireAdmin(request);
  const submission = parseWithZod(await readForm(request), { schema: Decision });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  const { orderId, refund, reason } = submission.value;
  try {
    await resolveDispute(orderId, { userId: admin.user.id, clientAddress: context.clientAddress }, toMinorUnits(refund)!, reason);
  } catch (err) {
    if (err instanceof PaymentProblem) return data({ result: submission.reply({ formErrors: [err.message] }) }, { status: err.status === 400 ? 400 : 409 });
    throw err;
  }
  return redirectWithToast("/admin/disputes", { kind: "success", message: "Dispute decided; the refund and payout are under way." });
}

export default function Disputes() {
  const fmt = useFormat();
  const { disputes } = useLoaderData<typeof loader>();
  const actionData = useActionData<typeof action>();
  const busy = useNavigation().state !== "idle";
  return (
    <div>
      <PageHeader title="Disputes" subtitle="The money of a disputed order stays held until you decide how to split it." />
      {disputes.length === 0 ? (
        <EmptyState title="No disputes">Disputes opened by clients on delivered data appear here.</EmptyState>
      ) : (
        <ul className="space-y-4">
          {disputes.map((d) => (
            <li key={d.orderId} className="card">
              <div className="flex flex-wrap items-baseline justify-between gap-2">
                <h2 className="font-semibold">
                  {d.title} — {d.client}
                </h2>
                <Badge tone={d.state === "open" ? "danger" : "neutral"}>{d.state === "open" ? "Open" : "Decided"}</Badge>
              </div>
              <p className="mt-2 text-sm text-ink-700">“{d.reason}”</p>
              <p className="mt-1 text-xs text-ink-500">
                Opened {fmt.dateTime(d.openedAt)} · order total {fmt.money(d.amountMinor, d.currency)} · held {fmt.money(d.heldMinor, d.currency)}
              </p>
              {d.decision ? (
                <p className="mt-3 text-sm">
                  Refunded {fmt.money(d.decision.refundMinor ?? 0, d.currency)}, paid to the lab {fmt.money(d.decision.payoutMinor ?? 0, d.currency)}. {d.decision.reason}
                </p>
              ) : (
                <Form method="post" className="mt-4 grid gap-3 sm:grid-cols-[12rem_1fr]">
                  <input type="hidden" name="orderId" value={d.orderId} />
                  <Field label={`Refund to the client (${d.currency})`} id={`refund-${d.orderId}`} hint={`The rest goes to the lab minus the ${d.feeBps / 100} % fee, e.g. a 50/50 split pays the lab ${fmt.money(d.halfSplitPayoutMinor, d.currency)}.`}>
                    <input id={`refund-${d.orderId}`} name="refund" className="input" inputMode="decimal" />
                  </Field>
                  <Field label="Reason for the decision" id={`reason-${d.orderId}`}>
                    <textarea id={`reason-${d.orderId}`} name="reason" rows={2} className="input" />
                  </Field>
                  <div className="sm:col-span-2">
                    <FormError errors={actionData?.result?.error?.[""] as string[] | undefined} />
                    <button type="submit" className="btn-primary" disabled={busy}>
                      Decide and settle
                    </button>
                  </div>
                </Form>
              )}
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Disputes — Diffractory" }];
}
