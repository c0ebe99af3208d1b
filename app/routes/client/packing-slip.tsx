// /client/orders/:id/packing-slip — a printable list of the parcel's samples with their declared hazards.
import { requireOrderSide } from "~/utils/permissions.server";
import { OrderSamples } from "~/components/order-samples";
import { DiffractionRingsIcon } from "~/components/ui";
import { organisationAddressOf } from "~/models/accounts/organisations.server";
import { orderSamples } from "~/models/files/files.server";
import { requestTitleOf } from "~/models/requests/requests.server";
import type { Route } from "./+types/packing-slip";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { actor, order } = await requireOrderSide(request, "client", params.id);
  const { membership } = actor;
  const [title, lab, samples] = await Promise.all([requestTitleOf(order.requestId), organisationAddressOf(order.labId), orderSamples(order)]);
  return { orderNumber: order.number, title: title ?? "", lab, from: membership.organisation.name, samples };
}

export default function PackingSlip({ loaderData }: Route.ComponentProps) {
  const { orderNumber, title, lab, from, samples } = loaderData;
  return (
    <article className="card mx-auto max-w-3xl print:border-0 print:shadow-none">
      <header className="flex items-center justify-between">
        <div className="flex items-center gap-2 font-bold">
          <DiffractionRingsIcon className="h-7 w-7 text-beam-600" /> Diffractory packing slip
        </div>
        <button type="button" className="btn-secondary print:hidden" onClick={() => window.print()}>
          Print
        </button>
      </header>
      <dl className="mt-6 grid grid-cols-2 gap-y-1 text-sm">
        <dt className="text-ink-600">Order</dt>
        <dd className="font-mono">{orderNumber}</dd>
        <dt className="text-ink-600">Request</dt>
        <dd>{title}</dd>
        <dt className="text-ink-600">From</dt>
        <dd>{from}</dd>
        <dt className="text-ink-600">To</dt>
        <dd>{[lab?.name, lab?.city, lab?.country].filter(Boolean).join(", ")}</dd>
        <dt className="text-ink-600">Samples</dt>
        <dd>{samples.length}</dd>
      </dl>
      <h1 className="mt-6 mb-3 text-lg font-semibold">Samples and declared hazards</h1>
      <OrderSamples samples={samples} />
      <p className="mt-6 text-xs text-ink-600">
        The carrier's dangerous-goods rules and the applicable transport regulations decide how hazardous samples are packed, labelled and shipped; this slip
        does not classify goods for transport.
      </p>
    </article>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Packing slip — Diffractory" }];
}
