// /client/orders/:id/agreement — make an order's accepted quote a standing agreement for one of the client's materials.
import { data, Form, Link } from "react-router";
import { DateField } from "~/components/date-field";
import { useFormat } from "~/components/locale";
import { FormError, PageHeader } from "~/components/ui";
import { isoDay } from "~/domain/agreements";
import { toMinorUnits } from "~/domain/money";
import { agreementMaterialsOf, proposeAgreement } from "~/models/agreements/agreements.server";
import { readForm } from "~/utils/form.server";
import { requireOrderSide } from "~/utils/permissions.server";
import { redirectWithToast } from "~/utils/toast.server";
import type { Route } from "./+types/order-agreement";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { order, actor } = await requireOrderSide(request, "client", params.id);
  const today = new Date();
  const inAYear = new Date(today.getTime() + 365 * 86_400_000);
  return {
    order: { id: order.id, number: order.number, netMinor: order.amountMinor - order.taxMinor, currency: order.currency, agreementId: order.agreementId },
    materials: await agreementMaterialsOf(actor.membership.organisation.id),
    defaults: { startsOn: isoDay(today), endsOn: isoDay(inAYear) },
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { order, actor } = await requireOrderSide(request, "client", params.id);
  const form = await readForm(request);
  const cap = toMinorUnits(String(form.get("budgetCap") ?? ""));
  if (cap === null) return data({ error: "Give the budget cap as an amount, e.g. 5000.00." }, { status: 400 });
  const noticeText = String(form.get("noticeDays") ?? "").trim();
  const made = await proposeAgreement(order.id, actor.membership.organisation.id, actor.user.id, {
    materialId: String(form.get("materialId") ?? ""),
    startsOn: String(form.get("startsOn") ?? "").trim(),
    endsOn: String(form.get("endsOn") ?? "").trim(),
    budgetCapMinor: cap,
    noticeDays: /^\d{1,4}$/.test(noticeText) ? Number(noticeText) : -1,
  });
  if (!made.ok) return data({ error: made.error }, { status: 400 });
  return redirectWithToast(`/client/agreements/${made.agreementId}`, { kind: "success", message: "Agreement proposed; the lab has been asked to agree." });
}

export default function OrderAgreement({ loaderData, actionData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { order, materials, defaults } = loaderData;
  return (
    <div className="space-y-6">
      <p className="text-sm">
        <Link to={`/client/orders/${order.id}`} className="text-beam-700 underline">
          ← Order {order.number}
        </Link>
      </p>
      <PageHeader
        title="Make this a standing agreement"
        subtitle={`Each lot of the material becomes an order at ${fmt.money(order.netMinor, order.currency)} (net, this quote's total), without a new round of quotes.`}
      />
      <FormError errors={actionData?.error ? [actionData.error] : null} />
      {materials.length === 0 ? (
        <section className="card">
          <p className="text-sm text-ink-700">
            An agreement is for one of your materials, and your organisation has declared none yet.{" "}
            <Link to="/client/materials/new" className="text-beam-700 underline">
              Declare a material
            </Link>{" "}
            first, then come back here.
          </p>
        </section>
      ) : (
        <Form method="post" className="card space-y-3">
          <div>
            <label htmlFor="material" className="label">
              Material
            </label>
            <select id="material" name="materialId" className="input" required>
              {materials.map((m) => (
                <option key={m.id} value={m.id}>
                  {m.name} ({m.productCode})
                </option>
              ))}
            </select>
          </div>
          <div className="grid gap-3 sm:grid-cols-2">
            <div>
              <label htmlFor="starts-on" className="label">
                First day
              </label>
              <DateField id="starts-on" name="startsOn" defaultValue={defaults.startsOn} required />
            </div>
            <div>
              <label htmlFor="ends-on" className="label">
                Last day
              </label>
              <DateField id="ends-on" name="endsOn" defaultValue={defaults.endsOn} required />
            </div>
            <div>
              <label htmlFor="budget-cap" className="label">
                Budget cap, net ({order.currency})
              </label>
              <input id="budget-cap" name="budgetCap" className="input" inputMode="decimal" required />
            </div>
            <div>
              <label htmlFor="notice-days" className="label">
                Notice (days)
              </label>
              <input id="notice-days" name="noticeDays" className="input" inputMode="numeric" defaultValue="14" required />
            </div>
          </div>
          <button type="submit" className="btn-primary">
            Propose the agreement to the lab
          </button>
        </Form>
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Standing agreement — Diffractory" },
    { name: "description", content: "Turn an order's accepted quote into a standing agreement with the lab for one of your materials." },
  ];
}
