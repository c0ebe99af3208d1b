// /client/orders/:id/packing-slip — a printable list of the parcel's samples with their declared hazards, and a
// parcel label to cut out: the lab's default receiving address (contact, opening hours), the client's as sender.
import { Formula } from "~/components/symbols";
import { requireOrderSide } from "~/utils/permissions.server";
import { OrderSamples } from "~/components/order-samples";
import { DiffractionRingsIcon } from "~/components/ui";
import { ParcelAddress } from "~/components/parcel-address";
import { organisationAddressOf } from "~/models/accounts/organisations.server";
import { defaultAddressOf } from "~/models/accounts/profiles.server";
import { orderSamples } from "~/models/files/files.server";
import { requestTitleOf } from "~/models/requests/requests.server";
import type { Route } from "./+types/packing-slip";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { actor, order } = await requireOrderSide(request, "client", params.id);
  const { membership } = actor;
  const [title, lab, samples, receiving, shipping] = await Promise.all([
    requestTitleOf(order.requestId),
    organisationAddressOf(order.labId),
    orderSamples(order),
    defaultAddressOf(order.labId, "receiving"),
    defaultAddressOf(membership.organisation.id, "shipping"),
  ]);
  return { orderNumber: order.number, title: title ?? "", lab, from: membership.organisation.name, samples, receiving, shipping };
}

export default function PackingSlip({ loaderData }: Route.ComponentProps) {
  const { orderNumber, title, lab, from, samples, receiving, shipping } = loaderData;
  const labName = lab?.name ?? "The lab";
  const noReceiving = `${labName} has not given a receiving address yet; ask the lab in the order's messages where to send the parcel.`;
  const noShipping = "Your organisation has no shipping address yet; add one on the Profile page.";
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
        <dd>
          <Formula>{title}</Formula>
        </dd>
        <dt className="text-ink-600">From</dt>
        <dd>{from}</dd>
        <dt className="text-ink-600">To</dt>
        <dd>
          <ParcelAddress name={labName} address={receiving} missing={noReceiving} />
        </dd>
        <dt className="text-ink-600">Samples</dt>
        <dd>{samples.length}</dd>
      </dl>
      <h1 className="mt-6 mb-3 text-lg font-semibold">Samples and declared hazards</h1>
      <OrderSamples samples={samples} />
      <section className="mt-8 break-inside-avoid rounded-md border-2 border-dashed border-ink-400 p-4" aria-labelledby="label-heading">
        <h2 id="label-heading" className="text-sm font-semibold text-ink-600">
          Parcel label — cut out and fix to the parcel
        </h2>
        <div className="mt-3 grid gap-4 sm:grid-cols-2">
          <div>
            <p className="text-xs text-ink-600">Sender</p>
            <ParcelAddress name={from} address={shipping} missing={noShipping} />
          </div>
          <div className="text-base">
            <p className="text-xs text-ink-600">Deliver to</p>
            <ParcelAddress name={labName} address={receiving} missing={noReceiving} />
            <p className="mt-2 font-mono text-sm">Order {orderNumber}</p>
          </div>
        </div>
      </section>
      <p className="mt-6 text-xs text-ink-600">
        The carrier's dangerous-goods rules and the applicable transport regulations decide how hazardous samples are packed, labelled and shipped; this slip
        does not classify goods for transport.
      </p>
    </article>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Packing slip — Diffractory" },
    { name: "description", content: "A printable list of the parcel's samples with their declared hazards, and a label addressed to the lab." },
  ];
}
