// /lab/agreements/:id — a standing agreement from the lab's side: terms, usage, its orders; agree, decline, give notice.
import { data, Form } from "react-router";
import { AgreementDetails, AgreementStateBadge, NoticeForm } from "~/components/agreement-parts";
import { FormError, PageHeader } from "~/components/ui";
import { agreementForParty, decideAgreement, giveNotice } from "~/models/agreements/agreements.server";
import { readForm } from "~/utils/form.server";
import { notFound, requireOrgRole } from "~/utils/permissions.server";
import { redirectWithToast } from "~/utils/toast.server";
import type { Route } from "./+types/agreement";

export async function loader({ request, params }: Route.LoaderArgs) {
  const actor = await requireOrgRole(request, "lab");
  const view = await agreementForParty(params.id, "lab", actor.membership.organisation.id);
  if (!view) notFound("No such agreement for your lab.");
  return { view };
}

export async function action({ request, params }: Route.ActionArgs) {
  // Agreeing binds the lab's prices for the period: owners and managers decide, as they send quotes.
  const actor = await requireOrgRole(request, "lab", ["owner", "manager"]);
  const labId = actor.membership.organisation.id;
  const view = await agreementForParty(params.id, "lab", labId);
  if (!view) notFound("No such agreement for your lab.");
  const form = await readForm(request);
  const intent = form.get("intent");
  const reason = String(form.get("reason") ?? "").trim();
  const back = `/lab/agreements/${view.agreement.id}`;
  if (intent === "agree" || intent === "decline") {
    const done = await decideAgreement(view.agreement.id, labId, actor.user.id, intent === "agree", reason.slice(0, 500));
    if (!done.ok) return data({ error: done.error }, { status: 409 });
    return redirectWithToast(back, {
      kind: "success",
      message: intent === "agree" ? "Agreed; the client can order lots now." : "Declined; the client has been told.",
    });
  }
  if (intent === "notice") {
    const done = await giveNotice(view.agreement.id, "lab", labId, actor.user.id, reason);
    if (!done.ok) return data({ error: done.error }, { status: 409 });
    return redirectWithToast(back, { kind: "info", message: "Notice given; the client has been told." });
  }
  return data({ error: "Choose what to do: agree, decline or give notice." }, { status: 400 });
}

export default function LabAgreement({ loaderData, actionData }: Route.ComponentProps) {
  const { view } = loaderData;
  const a = view.agreement;
  return (
    <div className="space-y-6">
      <PageHeader
        title={`Standing agreement ${a.number}`}
        subtitle={`${view.material.name} for ${view.clientName}`}
        actions={<AgreementStateBadge state={a.state} />}
      />
      <FormError errors={actionData?.error ? [actionData.error] : null} />
      {a.state === "proposed" ? (
        <section className="card" aria-labelledby="decide">
          <h2 id="decide" className="text-lg font-semibold">
            Agree or decline
          </h2>
          <p className="mt-1 text-sm text-ink-700">
            Agreeing means each lot the client orders in the period becomes an order at this price, until the budget cap is reached.
          </p>
          <Form method="post" className="mt-3 flex flex-wrap items-end gap-3">
            <div>
              <label htmlFor="decide-reason" className="label">
                Note (for a decline)
              </label>
              <input id="decide-reason" name="reason" className="input" maxLength={500} />
            </div>
            <button type="submit" name="intent" value="agree" className="btn-primary">
              Agree
            </button>
            <button type="submit" name="intent" value="decline" className="btn-secondary">
              Decline
            </button>
          </Form>
        </section>
      ) : null}
      <AgreementDetails view={view} orderHref="/lab/orders" />
      {a.state === "active" ? (
        <NoticeForm
          title="End with notice"
          explanation={`The agreement ends ${a.noticeDays} days after notice (or on its last day, if sooner); the client may still order lots until then.`}
          button="Give notice"
        />
      ) : null}
    </div>
  );
}

export function meta({ data: d }: Route.MetaArgs) {
  return [
    { title: `${d?.view.agreement.number ?? "Agreement"} — Diffractory` },
    { name: "description", content: "A standing agreement with a client: its terms and usage, the orders made under it; agree, decline or give notice." },
  ];
}
