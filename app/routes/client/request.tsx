// A client's request: its samples and hazards, the labs' quotes side by side, and accepting one of them.
import { data, Form, Link, redirect, useNavigation } from "react-router";
import { MatchReasons } from "~/components/match-reasons";
import { MessageThread } from "~/components/message-thread";
import { requestThreadForClient, requestThreadsOfClient, viewThread } from "~/models/messages/messages.server";
import { OrderStateBadge, QuoteStateBadge, RequestStateBadge, SampleCards } from "~/components/request-parts";
import { Badge, EmptyState, FormError, PageHeader, SafetyNotice, TableCard } from "~/components/ui";
import { anyHazardDeclared } from "~/components/order-samples";
import { fittingLabsPage, quoteJudgementsForRequest } from "~/models/labs/matching.server";
import { PageNav } from "~/components/data-table";
import { readTableQuery, type TableSpec } from "~/utils/table";
import { acceptQuote, orderForRequest, quotesForRequest } from "~/models/requests/quotes.server";
import { noLabCanMeasure, samplesOf, sdsLinks } from "~/models/requests/requests.server";
import { repeatRequest, revisionsOf, withdrawRequest } from "~/models/requests/request-life.server";
import { RequestNeeds, RevisionList } from "~/components/request-needs";
import { AWAITING_RECONFIRMATION } from "~/domain/request-revisions";
import { requireOrgRole, requireOwnRequest } from "~/utils/permissions.server";
import { redirectWithToast } from "~/utils/toast.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/request";
import { useFormat } from "~/components/locale";
import { PurchaseOrderFields } from "~/components/purchase-order-fields";
import { checkPurchaseOrder, purchaseOrderInputFrom, requiresPurchaseOrder } from "~/models/orders/purchase-orders.server";
import { ratesAmong } from "~/models/platform/exchange-rates.server";
import { quoteCurrencyNotes, rateText, parseRate } from "~/domain/exchange";
import { taxDecisionsFor } from "~/models/invoices/tax.server";
import { taxLineText, taxOn } from "~/domain/vat";
import type { TaxTreatment } from "~/domain/invoice-document";

/** The labs that fit, a page at a time in the matching order (fitting labs by name): `?page=<n>`. */
const MATCHES: TableSpec<"name"> = { sorts: ["name"], defaultSort: "name", firstDir: {}, pageSize: 10 };

export async function loader({ request, params }: Route.LoaderArgs) {
  const actor = await requireOrgRole(request, "client");
  const { user, membership } = actor;
  const row = await requireOwnRequest(params.id, membership.organisation.id, { request, actor });
  if (row.state === "draft") throw redirect(`/client/requests/${row.id}/edit/${row.draftStep}`);
  const matchQuery = readTableQuery(request, MATCHES);
  // Each quote card is judged by the instrument the quote names; the labs' matches judge each lab as a whole.
  const [samples, quotes, { matches, info: matchInfo }, judgements, order, revisions] = await Promise.all([
    samplesOf(row.id),
    quotesForRequest(row.id),
    fittingLabsPage(row.id, matchQuery),
    quoteJudgementsForRequest(row.id),
    orderForRequest(row.id),
    revisionsOf(row.id),
  ]);
  // One conversation per lab: the lab chosen with ?lab=<slug>, else the one with unread messages, else the latest.
  const threads = await requestThreadsOfClient(row.id, user.id, membership.organisation.id);
  const chosen = new URL(request.url).searchParams.get("lab") ?? (threads.find((t) => t.unread > 0) ?? threads.find((t) => t.messages > 0))?.slug ?? null;
  const found = chosen ? await requestThreadForClient(row.id, membership.organisation.id, chosen) : null;
  const conversation = found ? { lab: found.lab, ...(await viewThread(user.id, membership.organisation.id, found.thread)) } : null;
  // An edit after publishing can rule every lab out; the page says so rather than waiting for quotes that cannot come.
  // A request open to every lab that has a fitting lab on its first page needs no second look.
  const noLab = row.state === "open" && !(row.visibility === "open" && matchInfo.total > 0) ? await noLabCanMeasure(row) : null;
  // Quotes in other currencies: said plainly per card, with an indicative conversion at the latest admin-set rate.
  const live = quotes.filter((q) => q.state === "sent" || q.state === "accepted");
  const currencies = [...new Set([row.currency, ...live.map((q) => q.currency)])];
  const currencyNotes = quoteCurrencyNotes(live, row.currency, await ratesAmong(currencies));
  // The tax each quote would carry on acceptance, by the same rule acceptance fixes (docs/design.md#tax-on-invoices).
  const decisions = await taxDecisionsFor(
    live.map((q) => q.labId),
    membership.organisation.id,
  );
  const taxes = Object.fromEntries(
    live.map((q) => {
      const d =
        order?.quoteId === q.id && order.taxTreatment ? { treatment: order.taxTreatment as TaxTreatment, rateBps: order.taxRateBps } : decisions.get(q.labId)!;
      return [q.id, { treatment: d.treatment, rateBps: d.rateBps, taxMinor: taxOn(q.totalMinor, d.rateBps) }];
    }),
  );
  return {
    taxes,
    request: row,
    samples,
    quotes,
    matches,
    matchInfo,
    judgements,
    order,
    revisions,
    sds: await sdsLinks(samples),
    threads,
    conversation,
    noLab,
    currencyNotes,
    requiresPurchaseOrder: await requiresPurchaseOrder(membership.organisation.id),
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { user, membership } = await requireOrgRole(request, "client");
  const row = await requireOwnRequest(params.id, membership.organisation.id);
  const form = await readForm(request);
  const intent = form.get("intent");
  if (intent === "withdraw") {
    const done = await withdrawRequest(row, user.id);
    if (done.error) return data({ error: done.error }, { status: 400 });
    return redirectWithToast(`/client/requests/${row.id}`, {
      kind: "success",
      message: "Request withdrawn. Its quotes have lapsed and the labs that quoted have been told.",
    });
  }
  if (intent === "repeat") {
    const copy = await repeatRequest(row, user.id);
    if ("error" in copy) return data({ error: copy.error }, { status: 400 });
    return redirectWithToast(`/client/requests/${copy.id}/edit/samples`, {
      kind: "success",
      message: "A new draft with the same samples and needs. Check each step and set a new deadline before publishing.",
    });
  }
  if (intent !== "accept") return data({ error: "Choose what to do." }, { status: 400 });
  const po = await checkPurchaseOrder(row, purchaseOrderInputFrom(form));
  if (!po.ok) return data({ error: po.error }, { status: 400 });
  const result = await acceptQuote(row.id, String(form.get("quoteId") ?? ""), membership.organisation.id, user.id, po.po);
  if (!result.ok) return data({ error: result.error }, { status: 400 });
  // Accepting leads straight to the order, where the client pays into holding.
  return redirectWithToast(`/client/orders/${result.orderId}`, {
    kind: "success",
    message: "Quote accepted. The order is awaiting payment: pay the total to have it held until delivery.",
  });
}

export default function ClientRequest({ loaderData, actionData }: Route.ComponentProps) {
  const fmt = useFormat();
  const {
    request: r,
    samples,
    quotes,
    matches,
    matchInfo,
    judgements,
    order,
    revisions,
    sds,
    threads,
    conversation,
    noLab,
    currencyNotes,
    requiresPurchaseOrder,
  } = loaderData;
  const slugOf = new Map(threads.map((t) => [t.labId, t.slug]));
  const navigation = useNavigation();
  const live = quotes.filter((q) => q.state === "sent" || q.state === "accepted");
  const past = quotes.filter((q) => !(q.state === "sent" || q.state === "accepted"));
  return (
    <div>
      <PageHeader
        title={r.title}
        subtitle={
          <span className="inline-flex items-center gap-2">
            <RequestStateBadge state={r.state} /> {samples.length} sample{samples.length === 1 ? "" : "s"}
            {r.deadline ? ` · deadline ${fmt.date(r.deadline)}` : ""}
          </span>
        }
        actions={
          <span className="flex flex-wrap items-center gap-2">
            <Link to="/client/requests" className="btn-secondary">
              All requests
            </Link>
            <Form method="post">
              <input type="hidden" name="intent" value="repeat" />
              <button type="submit" className="btn-secondary" disabled={navigation.state !== "idle"}>
                Order again
              </button>
            </Form>
            {r.state === "open" ? (
              <Form
                method="post"
                onSubmit={(e) => {
                  if (!confirm("Withdraw this request? Every quote on it lapses and the labs that quoted are told.")) e.preventDefault();
                }}
              >
                <input type="hidden" name="intent" value="withdraw" />
                <button type="submit" className="btn-secondary" disabled={navigation.state !== "idle"}>
                  Withdraw request
                </button>
              </Form>
            ) : null}
          </span>
        }
      />
      {r.closedAt ? (
        <p className="card mb-4 text-sm" role="note">
          {`${r.state === "withdrawn" ? "You withdrew this request" : "This request expired on its deadline without an accepted quote"} on ${fmt.date(r.closedAt)}; its quotes have lapsed. Use “Order again” to post it anew.`}
        </p>
      ) : null}
      {noLab ? (
        <p className="card mb-4 border-caution-600 bg-caution-50 text-sm" role="alert">
          {noLab}
        </p>
      ) : null}
      <RequestNeeds request={r}>
        {r.state === "open" ? (
          <nav aria-label="Edit the request" className="mt-3 flex flex-wrap gap-3 text-sm">
            <span className="text-ink-600">Edit (labs that quoted are told what changed):</span>
            <Link to={`/client/requests/${r.id}/edit/samples`} className="text-beam-700 underline">
              Samples
            </Link>
            <Link to={`/client/requests/${r.id}/edit/hazards`} className="text-beam-700 underline">
              Hazards
            </Link>
            <Link to={`/client/requests/${r.id}/edit/measurement`} className="text-beam-700 underline">
              Measurement needs
            </Link>
            <Link to={`/client/requests/${r.id}/edit/labs`} className="text-beam-700 underline">
              Who may quote
            </Link>
          </nav>
        ) : null}
      </RequestNeeds>
      <RevisionList revisions={revisions} />
      {order ? (
        <section className="card mb-6" aria-label="Order">
          <div className="flex flex-wrap items-center justify-between gap-3">
            <h2 className="text-lg font-semibold">Order {order.number}</h2>
            <span className="flex items-center gap-3">
              <OrderStateBadge state={order.state} />
              <Link to={`/client/orders/${order.id}`} className="btn-secondary">
                Open the order
              </Link>
            </span>
          </div>
          <p className="mt-1 text-sm text-ink-600">
            {fmt.money(order.amountMinor, order.currency)} · payment is the next step; the funds are then held until the data is delivered.
          </p>
          <ol className="mt-3 space-y-1 text-sm">
            {order.events.map((e) => (
              <li key={e.id}>
                <span className="text-ink-500">{fmt.date(e.at)}</span> — {e.toState.replace(/_/g, " ")}
                {e.note ? `: ${e.note}` : ""}
              </li>
            ))}
          </ol>
        </section>
      ) : null}

      <h2 className="mb-3 text-lg font-semibold">Quotes</h2>
      <FormError errors={actionData?.error ? [actionData.error] : null} />
      {live.length === 0 ? (
        <EmptyState title="No quotes yet">Matching labs see your request in their inbox; their quotes appear here side by side.</EmptyState>
      ) : (
        <section className="grid gap-4 md:grid-cols-2 xl:grid-cols-3" aria-label="Quotes side by side">
          {live.map((q) => {
            const judged = judgements[q.id];
            const awaiting = q.state === "sent" && q.requestRevision < r.revision;
            return (
              <article key={q.id} className={`card flex flex-col ${q.state === "accepted" ? "border-ok-600" : ""}`} aria-label={`Quote from ${q.labName}`}>
                <div className="flex items-start justify-between gap-2">
                  <h3 className="font-semibold">{q.labName}</h3>
                  <QuoteStateBadge state={q.state} />
                </div>
                {awaiting ? (
                  <p className="mt-2 rounded border border-caution-600 bg-caution-50 p-2 text-sm text-caution-700" role="note">
                    <strong>Awaiting the lab's re-confirmation</strong> (quoted on revision {q.requestRevision}). {AWAITING_RECONFIRMATION}
                  </p>
                ) : null}
                <p className="mt-2 text-2xl font-bold">{fmt.money(q.totalMinor, q.currency)}</p>
                {loaderData.taxes[q.id] ? (
                  <p className="text-sm text-ink-700">
                    {taxLineText(loaderData.taxes[q.id], loaderData.taxes[q.id].taxMinor, (m) => fmt.money(m, q.currency))}
                  </p>
                ) : null}
                <CurrencyNote note={currencyNotes[q.id]} />
                <dl className="mt-2 grid grid-cols-[auto_1fr] gap-x-3 gap-y-0.5 text-sm">
                  <dt className="text-ink-500">Turnaround</dt>
                  <dd>{q.turnaroundDays} days</dd>
                  <dt className="text-ink-500">Instrument</dt>
                  <dd>{q.instrumentName ?? "—"}</dd>
                  <dt className="text-ink-500">Source</dt>
                  <dd>{q.source ?? "—"}</dd>
                  <dt className="text-ink-500">Valid until</dt>
                  <dd>{fmt.date(q.validUntil)}</dd>
                </dl>
                <table className="mt-3 w-full text-xs">
                  <tbody>
                    {q.lineItems.map((i, n) => (
                      <tr key={n} className="border-t border-ink-100">
                        <td className="py-1">
                          {i.quantity} × {i.description}
                        </td>
                        <td className="py-1 text-right whitespace-nowrap">{fmt.money(i.totalMinor, q.currency)}</td>
                      </tr>
                    ))}
                  </tbody>
                </table>
                {q.notes ? <p className="mt-2 text-sm text-ink-700">{q.notes}</p> : null}
                {judged ? <MatchReasons reasons={judged.reasons} warnings={judged.warnings} /> : null}
                {slugOf.has(q.labId) ? (
                  <Link to={`?lab=${slugOf.get(q.labId)}#messages`} preventScrollReset className="mt-2 text-sm text-beam-700 hover:underline">
                    Messages with {q.labName}
                  </Link>
                ) : null}
                {r.state === "open" && q.state === "sent" && !awaiting ? (
                  <Form method="post" className="mt-auto pt-4">
                    <input type="hidden" name="intent" value="accept" />
                    <input type="hidden" name="quoteId" value={q.id} />
                    <PurchaseOrderFields id={`po-${q.id}`} requestId={r.id} required={requiresPurchaseOrder} />
                    <button type="submit" className="btn-primary mt-3 w-full" disabled={navigation.state !== "idle"}>
                      Accept {q.labName}'s quote
                    </button>
                  </Form>
                ) : null}
              </article>
            );
          })}
        </section>
      )}
      {past.length ? (
        <p className="mt-3 text-sm text-ink-600">
          Also received: {past.map((q) => `${q.labName} (${q.state}, ${fmt.money(q.totalMinor, q.currency)})`).join("; ")}.
        </p>
      ) : null}

      <section className="mt-8" aria-label="Matching labs">
        <h2 className="mb-3 text-lg font-semibold">Matching labs</h2>
        {matchInfo.total === 0 ? (
          <p className="text-sm text-ink-600">No approved lab's instruments and hazard acceptance fit this request as it now reads.</p>
        ) : (
          <>
            <p className="mb-2 text-sm text-ink-600">
              Labs whose instruments and hazard acceptance fit your samples and needs; estimates are from their price lists.
            </p>
            <TableCard columns={["Lab", "Instrument", "Estimate", "Turnaround"]} caption="Matching labs">
              {matches.map((m) => (
                <tr key={m.labId}>
                  <td>
                    <Link to={`/labs/${m.labSlug}`} className="text-beam-700 underline">
                      {m.labName}
                    </Link>
                    {m.warnings.map((w) => (
                      <p key={w} className="text-xs text-caution-700">
                        {w}
                      </p>
                    ))}
                  </td>
                  <td>{m.instrumentName ? `${m.instrumentName} (${m.source})` : "—"}</td>
                  <td>{m.estimatedPriceMinor !== null && m.currency ? fmt.money(m.estimatedPriceMinor, m.currency) : "—"}</td>
                  <td>{m.turnaroundDays !== null ? `${m.turnaroundDays} days` : "—"}</td>
                </tr>
              ))}
            </TableCard>
          </>
        )}
        <PageNav info={matchInfo} noun={["matching lab", "matching labs"]} />
      </section>

      <section className="mt-8" aria-label="Questions from labs">
        <h2 className="mb-3 text-lg font-semibold">Questions from labs</h2>
        {threads.length === 0 ? (
          <p className="text-sm text-ink-600">
            No lab has written yet. Labs that can see the request may ask about it here before quoting; each lab sees only its own conversation with you.
          </p>
        ) : (
          <ul className="flex flex-wrap gap-2" aria-label="Conversations by lab">
            {threads.map((t) => (
              <li key={t.labId}>
                <Link
                  to={`?lab=${t.slug}#messages`}
                  preventScrollReset
                  aria-current={conversation?.lab.id === t.labId ? "true" : undefined}
                  className={`inline-flex items-center gap-2 rounded-md border px-3 py-1.5 text-sm ${conversation?.lab.id === t.labId ? "border-beam-600 bg-beam-50 text-beam-700" : "border-ink-200 text-ink-700 hover:bg-ink-100"}`}
                >
                  {t.labName}
                  <span className="text-xs text-ink-500">
                    {t.messages} message{t.messages === 1 ? "" : "s"}
                  </span>
                  {t.unread ? <Badge tone="brand">{t.unread} unread</Badge> : null}
                </Link>
              </li>
            ))}
          </ul>
        )}
        {conversation ? (
          <MessageThread
            id="request-thread"
            title={`Conversation with ${conversation.lab.name}`}
            intro={`Only ${conversation.lab.name} and your organisation read this conversation.`}
            messages={conversation.messages}
            yourSide="client"
            action={`/api/requests/${r.id}/messages?lab=${encodeURIComponent(conversation.lab.slug)}`}
            open={conversation.open}
            closedBecause={conversation.closedBecause}
            unread={conversation.unread}
          />
        ) : null}
      </section>

      <h2 className="mt-8 mb-3 text-lg font-semibold">Samples and hazard declaration</h2>
      {anyHazardDeclared(samples) ? <SafetyNotice className="mb-4" /> : null}
      <SampleCards samples={samples} sds={sds} />
    </div>
  );
}

/** A quote card's currency: which one it is in when the quotes differ, and the indicative conversion or the lack of a rate. */
function CurrencyNote({ note }: { note: Route.ComponentProps["loaderData"]["currencyNotes"][string] | undefined }) {
  const fmt = useFormat();
  if (!note || (!note.note && !note.conversion)) return null;
  const c = note.conversion;
  return (
    <div className="mt-1 space-y-0.5 text-sm" role="note">
      {note.note ? <p className="font-semibold text-ink-700">{note.note}.</p> : null}
      {c?.kind === "converted" ? (
        <p className="text-ink-600">
          About {fmt.money(c.amountMinor, c.currency)} (indicative), at 1 {c.rate.base} = {rateText(parseRate(c.rate.rate) ?? 0n)} {c.rate.quote} as of{" "}
          {fmt.date(c.rate.asOf)}, source: {c.rate.source || "not given"}. You pay in the quote's currency.
        </p>
      ) : c?.kind === "no_rate" ? (
        <p className="text-ink-600">
          No exchange rate from {c.from} to {c.to} is set, so no conversion is shown.
        </p>
      ) : null}
    </div>
  );
}

export function meta({ data }: Route.MetaArgs) {
  return [
    { title: `${data?.request.title ?? "Request"} — Diffractory` },
    { name: "description", content: "A request with its samples and hazards, the labs' quotes side by side, and accepting one of them." },
  ];
}
