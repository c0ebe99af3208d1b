// /lab/payouts — the lab's payout account (onboarding at the payment provider) and the payouts it received.
import { Formula } from "~/components/symbols";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import { Badge, EmptyState, FormError, PageHeader, TableCard } from "~/components/ui";
import { findLab } from "~/models/labs/vetting.server";
import { PAYOUTS_PAGE_SIZE, payoutsOfLab } from "~/models/orders/queries.server";
import { PageNav } from "~/components/data-table";
import { readTableQuery, type TableSpec } from "~/utils/table";
import { payoutOnboardingUrl, PaymentProblem, syncPayoutAccount } from "~/models/payments/provider.server";
import { requireOrgRole } from "~/utils/permissions.server";
import type { Route } from "./+types/payouts";
import { useFormat } from "~/components/locale";

/** Newest first, PAYOUTS_PAGE_SIZE to a page (`?page=`). */
const PAYOUTS_TABLE: TableSpec<"at"> = { sorts: ["at"], defaultSort: "at", firstDir: { at: "desc" }, pageSize: PAYOUTS_PAGE_SIZE };

export async function loader({ request }: Route.LoaderArgs) {
  const { membership } = await requireOrgRole(request, "lab");
  const labId = membership.organisation.id;
  let lab = await findLab(labId);
  // Back from onboarding: read the account's state now rather than wait for the provider's event.
  if (lab?.payoutAccountId && !lab.payoutsEnabled && new URL(request.url).searchParams.get("onboarding") === "done") {
    await syncPayoutAccount(lab.payoutAccountId).catch(() => null);
    lab = await findLab(labId);
  }
  const { payouts, info } = await payoutsOfLab(labId, readTableQuery(request, PAYOUTS_TABLE));
  return { account: { id: lab?.payoutAccountId ?? null, ready: lab?.payoutsEnabled ?? false }, canManage: membership.role === "manager", payouts, info };
}

export async function action({ request }: Route.ActionArgs) {
  const { membership, user } = await requireOrgRole(request, "lab", ["manager"]);
  try {
    return redirect(await payoutOnboardingUrl(membership.organisation.id, user.email));
  } catch (err) {
    if (err instanceof PaymentProblem) return data({ error: err.message }, { status: err.status === 503 ? 503 : 409 });
    throw err;
  }
}

export default function Payouts({ loaderData, actionData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { account, canManage, payouts, info } = loaderData;
  const busy = useNavigation().state !== "idle";
  return (
    <div>
      <PageHeader title="Payouts" subtitle="Accepted orders are paid to your payout account: the quote total minus the platform fee." />
      <section className="card mb-6">
        <h2 className="text-lg font-semibold">Payout account</h2>
        <p className="mt-2 text-sm text-ink-700">
          {account.ready ? (
            <Badge tone="ok">Ready for payouts</Badge>
          ) : account.id ? (
            <Badge tone="caution">Onboarding not finished</Badge>
          ) : (
            <Badge tone="neutral">Not connected</Badge>
          )}{" "}
          {account.ready ? "Payouts go to this account." : "A lab connects its payout account before it can send quotes."}
        </p>
        <FormError errors={actionData?.error ? [actionData.error] : null} />
        {canManage && !account.ready ? (
          <Form method="post">
            <button type="submit" className="btn-primary" disabled={busy}>
              {busy ? "Opening onboarding…" : account.id ? "Continue onboarding" : "Connect a payout account"}
            </button>
          </Form>
        ) : null}
        {!canManage && !account.ready ? <p className="text-sm text-ink-600">A lab manager connects the payout account.</p> : null}
      </section>
      {payouts.length === 0 ? (
        <EmptyState
          title="No payouts yet"
          action={
            <Link to="/lab/work-queue" className="btn-secondary">
              See the work queue
            </Link>
          }
        >
          Payouts appear here when clients accept your deliveries.
        </EmptyState>
      ) : (
        <>
          <TableCard columns={["When", "Order", "Paid to you", "Platform fee", "Reference"]} caption="Payouts">
            {payouts.map((p) => (
              <tr key={p.id}>
                <td>{fmt.dateTime(p.at)}</td>
                <td>
                  {p.orderId ? (
                    <Link to={`/lab/orders/${p.orderId}`} className="text-beam-700 underline">
                      <span className="font-mono text-xs">{p.orderNumber}</span> <Formula>{p.title}</Formula>
                    </Link>
                  ) : (
                    "—"
                  )}
                </td>
                <td className="font-medium">{fmt.money(p.amount, p.currency)}</td>
                <td>{p.feeMinor === null ? "—" : fmt.money(p.feeMinor, p.currency)}</td>
                <td>
                  {/* The order number and the day are the reference people use; the provider's id stays secondary, for the payout account's own records. */}
                  <span className="font-mono text-xs">
                    {p.orderNumber || "—"} / {fmt.date(p.at)}
                  </span>
                  <span className="block text-xs text-ink-500">provider&apos;s transfer id {p.transferId}</span>
                </td>
              </tr>
            ))}
          </TableCard>
          <PageNav info={info} noun={["payout", "payouts"]} />
        </>
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Payouts — Diffractory" },
    { name: "description", content: "Your lab's payout account at the payment provider and the payouts it received." },
  ];
}
