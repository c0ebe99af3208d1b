// /client/agreements/:id — a standing agreement from the client's side: terms, usage, its orders; order a lot, give notice.
import { data, Form } from "react-router";
import { AgreementDetails, AgreementStateBadge, NoticeForm } from "~/components/agreement-parts";
import { FormError, PageHeader } from "~/components/ui";
import { lotCodesFrom } from "~/domain/agreements";
import { agreementForParty, giveNotice, orderLots } from "~/models/agreements/agreements.server";
import { checkPurchaseOrder, purchaseOrderInputFrom, requiresPurchaseOrder } from "~/models/orders/purchase-orders.server";
import { readForm } from "~/utils/form.server";
import { notFound, requireOrgRole } from "~/utils/permissions.server";
import { redirectWithToast } from "~/utils/toast.server";
import type { Route } from "./+types/agreement";

async function load(request: Request, id: string | undefined) {
  const actor = await requireOrgRole(request, "client");
  const view = await agreementForParty(id, "client", actor.membership.organisation.id);
  if (!view) notFound("No such agreement in your organisation.");
  return { actor, view };
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const { actor, view } = await load(request, params.id);
  return { view, poRequired: await requiresPurchaseOrder(actor.membership.organisation.id) };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { actor, view } = await load(request, params.id);
  const form = await readForm(request);
  const organisationId = actor.membership.organisation.id;
  const intent = form.get("intent");
  if (intent === "order-lot") {
    const codes = lotCodesFrom(String(form.get("lotCodes") ?? ""));
    if ("error" in codes) return data({ error: codes.error }, { status: 400 });
    // Number only: the PO file is added on the order's page once it exists (its uploads go under the request).
    const checked = await checkPurchaseOrder({ id: view.agreement.id, organisationId }, { ...purchaseOrderInputFrom(form), fileKey: null });
    if (!checked.ok) return data({ error: checked.error }, { status: 400 });
    const made = await orderLots(view.agreement.id, organisationId, actor.user.id, codes.codes, checked.po);
    if (!made.ok) return data({ error: made.error }, { status: 409 });
    return redirectWithToast(`/client/orders/${made.orderId}`, {
      kind: "success",
      message: `Order ${made.orderNumber} made under ${view.agreement.number}; pay it to start.`,
    });
  }
  if (intent === "notice") {
    const done = await giveNotice(view.agreement.id, "client", organisationId, actor.user.id, String(form.get("reason") ?? ""));
    if (!done.ok) return data({ error: done.error }, { status: 409 });
    return redirectWithToast(`/client/agreements/${view.agreement.id}`, { kind: "info", message: "Notice given; the lab has been told." });
  }
  return data({ error: "Choose what to do: order a lot or give notice." }, { status: 400 });
}

export default function ClientAgreement({ loaderData, actionData }: Route.ComponentProps) {
  const { view, poRequired } = loaderData;
  const a = view.agreement;
  const running = a.state === "active" || a.state === "ending";
  return (
    <div className="space-y-6">
      <PageHeader
        title={`Standing agreement ${a.number}`}
        subtitle={`${view.material.name} with ${view.labName}`}
        actions={<AgreementStateBadge state={a.state} />}
      />
      <FormError errors={actionData?.error ? [actionData.error] : null} />
      {a.state === "proposed" ? <p className="text-sm text-ink-700">Waiting for {view.labName} to agree or decline.</p> : null}
      {running ? (
        <section className="card" aria-labelledby="order-lot">
          <h2 id="order-lot" className="text-lg font-semibold">
            Order a lot
          </h2>
          <p className="mt-1 text-sm text-ink-700">
            The order is made at once at the agreed price per lot, with the material's declaration, and waits for payment. No quote is asked for.
          </p>
          <Form method="post" className="mt-3 space-y-3">
            <input type="hidden" name="intent" value="order-lot" />
            <div>
              <label htmlFor="lot-codes" className="label">
                Lot code(s), one per line
              </label>
              <textarea id="lot-codes" name="lotCodes" className="input" rows={2} required />
            </div>
            <div>
              <label htmlFor="po-number" className="label">
                Purchase-order number{poRequired ? " (required by your organisation)" : " (optional)"}
              </label>
              <input id="po-number" name="purchaseOrderNumber" className="input" maxLength={60} autoComplete="off" aria-required={poRequired} />
            </div>
            <button type="submit" className="btn-primary">
              Order the lot
            </button>
          </Form>
        </section>
      ) : null}
      <AgreementDetails view={view} orderHref="/client/orders" />
      {a.state === "active" || a.state === "proposed" ? (
        <NoticeForm
          title={a.state === "proposed" ? "Withdraw the proposal" : "End with notice"}
          explanation={
            a.state === "proposed"
              ? "The proposal ends at once."
              : `The agreement ends ${a.noticeDays} days after notice (or on its last day, if sooner); lots may still be ordered until then.`
          }
          button={a.state === "proposed" ? "Withdraw" : "Give notice"}
        />
      ) : null}
    </div>
  );
}

export function meta({ data: d }: Route.MetaArgs) {
  return [
    { title: `${d?.view.agreement.number ?? "Agreement"} — Diffractory` },
    { name: "description", content: "A standing agreement with a lab: its terms and usage, the orders made under it, ordering a lot and giving notice." },
  ];
}
