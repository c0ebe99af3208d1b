// A request as a lab sees it: the hazard declaration to acknowledge, then the quote builder; the lab's own quotes.
import { getFormProps, getInputProps, getSelectProps, getTextareaProps, useForm } from "@conform-to/react";
import { DateField } from "~/components/date-field";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, useNavigation } from "react-router";
import { MatchReasons } from "~/components/match-reasons";
import { MessageThread } from "~/components/message-thread";
import { requestThreadForLab, viewThread } from "~/models/messages/messages.server";
import { QuoteStateBadge, SampleCards } from "~/components/request-parts";
import { Badge, Field, FieldErrors, FormError, PageHeader, SafetyNotice } from "~/components/ui";
import { anyHazardDeclared } from "~/components/order-samples";
import { CLIENT_KIND_LABELS } from "~/domain/profile-forms";
import { labelOf, matchLab, sourceLabel } from "~/domain/matching";
import { organisationNameOf } from "~/models/accounts/organisations.server";
import { clientStandingOf, loadMatchLabs, loadMatchRequest } from "~/models/labs/matching.server";
import { pricesForClient } from "~/domain/price-tiers";
import { toMajorText, toMinorUnits } from "~/domain/money";
import { QuoteSchema } from "~/domain/quote-forms";
import { draftLineItems, instrumentsOf, priceListOf, labQuotesOnRequest, sendQuote, vettingStateOf, withdrawQuote } from "~/models/requests/quotes.server";
import { acknowledgeHazards, acknowledgementOf, samplesOf, sdsLinks } from "~/models/requests/requests.server";
import { reconfirmQuote, revisionsOf } from "~/models/requests/request-life.server";
import { RequestNeeds, RevisionList } from "~/components/request-needs";
import { forbidden, requireLabQuote, requireOrgRole, requireRequestForLab } from "~/utils/permissions.server";
import { redirectWithToast } from "~/utils/toast.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/request";
import { useFormat } from "~/components/locale";
import { SubmitButton } from "~/components/pending";

const isoInDays = (days: number) => new Date(Date.now() + days * 86_400_000).toISOString().slice(0, 10);

export async function loader({ request, params }: Route.LoaderArgs) {
  const actor = await requireOrgRole(request, "lab");
  const { user, membership } = actor;
  const labId = membership.organisation.id;
  const row = await requireRequestForLab(params.id, labId, { request, actor });
  const thread = await requestThreadForLab(row.id, labId);
  // The client's confirmed kind picks the price tier the quote drafts from (docs/design.md#price-tiers).
  const standing = await clientStandingOf(row.organisationId);
  const [samples, acknowledgement, vetting, prices, instruments, quotes, client, matchRequest, [lab], revisions] = await Promise.all([
    samplesOf(row.id),
    acknowledgementOf(row.id, labId),
    vettingStateOf(labId),
    priceListOf(labId),
    instrumentsOf(labId),
    labQuotesOnRequest(labId, row.id),
    organisationNameOf(row.organisationId),
    loadMatchRequest(row.id),
    loadMatchLabs([labId], standing),
    revisionsOf(row.id),
  ]);
  const match = matchRequest && lab ? matchLab(matchRequest, lab) : null;
  const { prices: clientPrices, choice: tierChoice } = pricesForClient(prices, standing);
  const draft = draftLineItems(row, samples, clientPrices);
  return {
    request: row,
    messages: thread ? await viewThread(user.id, labId, thread) : null,
    client: client ?? "",
    samples,
    sds: await sdsLinks(samples),
    acknowledgement,
    approved: vetting === "approved",
    canQuote: membership.role === "manager",
    match,
    quotes,
    revisions,
    instruments: instruments.map((i) => ({ id: i.id, label: `${i.name} (${sourceLabel(i)})` })),
    currency: prices?.currency ?? row.currency,
    tier: prices ? { used: tierChoice.tier, confirmed: tierChoice.confirmed, statedKind: tierChoice.statedKind, note: tierChoice.note } : null,
    defaults: {
      items: draft.length
        ? draft.map((i) => ({ description: i.description, quantity: String(i.quantity), unitPrice: toMajorText(i.unitMinor) }))
        : [{ description: "", quantity: "1", unitPrice: "" }],
      validUntil: isoInDays(14),
      turnaroundDays: String(prices?.turnaroundDays ?? 10),
      instrumentId: match?.bestInstrumentId ?? instruments[0]?.id ?? "",
      notes: "",
    },
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { user, membership } = await requireOrgRole(request, "lab");
  const labId = membership.organisation.id;
  const row = await requireRequestForLab(params.id, labId);
  const formData = await readForm(request);
  const intent = formData.get("intent");
  if (intent === "acknowledge") {
    if ((await vettingStateOf(labId)) !== "approved") return data({ error: "Only approved labs can acknowledge and quote." }, { status: 400 });
    await acknowledgeHazards(row.id, labId, user.id);
    return redirectWithToast(`/lab/requests/${row.id}`, { kind: "success", message: "Hazard declaration acknowledged." });
  }
  // A quote commits the lab to a price, like the price list only its managers may change; any staff acknowledges.
  if (membership.role !== "manager") forbidden("Only the lab's managers send and withdraw quotes.");
  if (intent === "reconfirm") {
    const quote = await requireLabQuote(String(formData.get("quoteId") ?? ""), labId);
    const done = await reconfirmQuote(quote.id, labId, user.id);
    if (done.error) return data({ error: done.error }, { status: 400 });
    return redirectWithToast(`/lab/requests/${row.id}`, {
      kind: "success",
      message: "Quote re-confirmed for the changed request; the client can accept it again.",
    });
  }
  if (intent === "withdraw") {
    const quote = await requireLabQuote(String(formData.get("quoteId") ?? ""), labId);
    const done = await withdrawQuote(quote.id, labId, user.id);
    if (done.error) return data({ error: done.error }, { status: 400 });
    return redirectWithToast(`/lab/requests/${row.id}`, { kind: "success", message: "Quote withdrawn." });
  }
  const submission = parseWithZod(formData, { schema: QuoteSchema });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: submission.status === "error" ? 400 : 200 });
  const sent = await sendQuote(row, labId, user.id, submission.value);
  if (!sent.ok) {
    return data({ result: submission.reply({ formErrors: sent.formError ? [sent.formError] : undefined, fieldErrors: sent.fieldErrors }) }, { status: 400 });
  }
  return redirectWithToast(`/lab/requests/${row.id}`, { kind: "success", message: "Quote sent to the client." });
}

export default function LabRequest({ loaderData, actionData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { request: r, client, samples, sds, acknowledgement, approved, canQuote, match, quotes, revisions } = loaderData;
  const navigation = useNavigation();
  const live = quotes.find((q) => q.state === "sent" || q.state === "accepted");
  const stale = live?.state === "sent" && live.requestRevision < r.revision ? live : null;
  return (
    <div>
      <PageHeader
        title={r.title}
        subtitle={`${client} · ${labelOf(r.technique)} · ${samples.length} sample${samples.length === 1 ? "" : "s"}${r.deadline ? ` · deadline ${fmt.date(r.deadline)}` : ""}`}
      />
      {r.state !== "open" ? (
        <p className="card mb-4 text-sm" role="note">
          This request is {r.state}
          {r.closedAt ? ` since ${fmt.date(r.closedAt)}` : ""}; it takes no more quotes.
        </p>
      ) : null}
      {stale ? (
        <section className="card mb-4 border-caution-600 text-sm" aria-label="Changed since your quote">
          <h2 className="text-lg font-semibold">The client changed the request after your quote</h2>
          <p className="mt-1 text-ink-700">
            Your quote answers revision {stale.requestRevision}; the request is now at revision {r.revision}. The client cannot accept it until you re-confirm
            it for the changes below, or withdraw it and send a new one.
          </p>
          <RevisionList revisions={revisions} since={stale.requestRevision} />
          {canQuote ? (
            <Form method="post">
              <input type="hidden" name="intent" value="reconfirm" />
              <input type="hidden" name="quoteId" value={stale.id} />
              <SubmitButton className="btn-primary" match={{ intent: "reconfirm", quoteId: stale.id }} pendingText="Re-confirming…">
                Re-confirm quote
              </SubmitButton>
            </Form>
          ) : (
            <p className="text-ink-600">A manager of your lab re-confirms or withdraws quotes.</p>
          )}
        </section>
      ) : null}
      <RequestNeeds request={r}>{match ? <MatchReasons reasons={match.reasons} warnings={match.warnings} /> : null}</RequestNeeds>
      {stale ? null : <RevisionList revisions={revisions} />}

      <h2 className="mb-3 text-lg font-semibold">Hazard declaration</h2>
      {anyHazardDeclared(samples) ? <SafetyNotice className="mb-4" /> : null}
      <SampleCards samples={samples} sds={sds} />
      <div className="card mt-4">
        {acknowledgement ? (
          <p className="text-sm text-ok-700">
            <span aria-hidden="true">✓ </span>Hazard declaration acknowledged by {acknowledgement.name} on {fmt.date(acknowledgement.at)}.
          </p>
        ) : (
          <Form method="post" className="flex flex-wrap items-center justify-between gap-3">
            <p className="text-sm text-ink-700">A member of your lab must acknowledge the declaration above before any quote can be sent.</p>
            <input type="hidden" name="intent" value="acknowledge" />
            <button type="submit" className="btn-primary" disabled={!approved || navigation.state !== "idle"}>
              Acknowledge hazard declaration
            </button>
          </Form>
        )}
        {actionData && "error" in actionData ? <FormError errors={[actionData.error]} /> : null}
      </div>

      {quotes.length ? (
        <section className="mt-6" aria-label="Your quotes">
          <h2 className="mb-3 text-lg font-semibold">Your quotes</h2>
          <ul className="space-y-2">
            {quotes.map((q) => (
              <li key={q.id} className="card flex flex-wrap items-center justify-between gap-3 text-sm">
                <span>
                  <QuoteStateBadge state={q.state} /> {fmt.money(q.totalMinor, q.currency)} · {q.turnaroundDays} days · valid until {fmt.date(q.validUntil)}
                </span>
                {q.state === "sent" && canQuote ? (
                  <Form method="post">
                    <input type="hidden" name="intent" value="withdraw" />
                    <input type="hidden" name="quoteId" value={q.id} />
                    <SubmitButton className="btn-secondary" match={{ intent: "withdraw", quoteId: q.id }} pendingText="Withdrawing…">
                      Withdraw quote
                    </SubmitButton>
                  </Form>
                ) : null}
              </li>
            ))}
          </ul>
        </section>
      ) : null}

      {acknowledgement && approved && canQuote && r.state === "open" && !live ? <QuoteBuilder loaderData={loaderData} actionData={actionData} /> : null}

      {loaderData.messages ? (
        <MessageThread
          id="request-thread"
          title={`Questions to ${client || "the client"}`}
          intro="Ask about the samples or the measurement before you quote. Only your lab and the client read this conversation."
          messages={loaderData.messages.messages}
          yourSide="lab"
          action={`/api/requests/${r.id}/messages`}
          open={loaderData.messages.open}
          closedBecause={loaderData.messages.closedBecause}
          unread={loaderData.messages.unread}
        />
      ) : null}
    </div>
  );
}

function QuoteBuilder({ loaderData, actionData }: Pick<Route.ComponentProps, "loaderData" | "actionData">) {
  const { instruments, currency, defaults, tier } = loaderData;
  const navigation = useNavigation();
  const [form, fields] = useForm({
    lastResult: actionData && "result" in actionData ? actionData.result : undefined,
    defaultValue: defaults,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: QuoteSchema }),
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
  });
  const items = fields.items.getFieldList();
  const fmt = useFormat();
  // The running total as the lab types, added up as the server will add it (whole quantities, integer minor units).
  const total = items.reduce<number | null>((sum, item) => {
    const f = item.getFieldset();
    const quantity = Number(f.quantity.value ?? "");
    const unit = toMinorUnits(String(f.unitPrice.value ?? ""));
    return sum === null || !Number.isInteger(quantity) || quantity < 1 || unit === null ? null : sum + quantity * unit;
  }, 0);
  return (
    <section className="card mt-6" aria-label="Quote builder">
      <h2 className="text-lg font-semibold">Quote</h2>
      <p className="mb-4 text-sm text-ink-600">
        Drafted from your price list; edit the items as needed. Prices in {currency}; the total below adds up as you type.
      </p>
      {tier ? (
        <p className="mb-4 flex flex-wrap items-center gap-2 text-sm" data-testid="price-tier">
          <Badge tone={tier.used ? "ok" : "neutral"}>{tier.used ? `${CLIENT_KIND_LABELS[tier.used]} prices` : "Base prices"}</Badge>
          {tier.statedKind ? tier.confirmed ? <Badge tone="ok">kind confirmed</Badge> : <Badge tone="caution">kind not confirmed</Badge> : null}
          <span className="text-ink-700">{tier.note}</span>
        </p>
      ) : null}
      <Form method="post" {...getFormProps(form)} className="space-y-2">
        <input type="hidden" name="intent" value="send" />
        <table className="table">
          <thead>
            <tr>
              <th scope="col">Description</th>
              <th scope="col">Quantity</th>
              <th scope="col">Unit price ({currency})</th>
              <th scope="col">
                <span className="sr-only">Remove</span>
              </th>
            </tr>
          </thead>
          <tbody>
            {items.map((item, index) => {
              const f = item.getFieldset();
              return (
                <tr key={item.key}>
                  <td>
                    <input
                      className="input"
                      aria-label={`Item ${index + 1} description`}
                      {...getInputProps(f.description, { type: "text", ariaAttributes: true })}
                    />
                    <FieldErrors id={`${f.description.id}-error`} errors={f.description.errors} />
                  </td>
                  <td className="w-28">
                    <input className="input" inputMode="numeric" aria-label={`Item ${index + 1} quantity`} {...getInputProps(f.quantity, { type: "text" })} />
                    <FieldErrors id={`${f.quantity.id}-error`} errors={f.quantity.errors} />
                  </td>
                  <td className="w-40">
                    <input
                      className="input"
                      inputMode="decimal"
                      aria-label={`Item ${index + 1} unit price`}
                      {...getInputProps(f.unitPrice, { type: "text" })}
                    />
                    <FieldErrors id={`${f.unitPrice.id}-error`} errors={f.unitPrice.errors} />
                  </td>
                  <td className="w-24">
                    {items.length > 1 ? (
                      <button type="submit" className="btn-quiet" {...form.remove.getButtonProps({ name: fields.items.name, index })}>
                        Remove
                      </button>
                    ) : null}
                  </td>
                </tr>
              );
            })}
          </tbody>
        </table>
        <FieldErrors id={`${fields.items.id}-error`} errors={fields.items.errors} />
        <p role="status" className="text-right text-sm" aria-label="Quote total">
          Total <strong className="text-base">{total === null ? "—" : fmt.money(total, currency)}</strong>
          {total === null ? <span className="block text-xs text-ink-600">Give every item a whole quantity and a unit price to see the total.</span> : null}
        </p>
        <button
          type="submit"
          className="btn-secondary"
          {...form.insert.getButtonProps({ name: fields.items.name, defaultValue: { description: "", quantity: "1", unitPrice: "" } })}
        >
          Add an item
        </button>
        <div className="grid gap-4 sm:grid-cols-3">
          <Field label="Valid until" id={fields.validUntil.id} errors={fields.validUntil.errors}>
            <DateField {...getInputProps(fields.validUntil, { type: "text" })} />
          </Field>
          <Field label="Turnaround (days)" id={fields.turnaroundDays.id} errors={fields.turnaroundDays.errors}>
            <input className="input" inputMode="numeric" {...getInputProps(fields.turnaroundDays, { type: "text" })} />
          </Field>
          <Field label="Instrument" id={fields.instrumentId.id} errors={fields.instrumentId.errors}>
            <select className="input" {...getSelectProps(fields.instrumentId)}>
              <option value="">Choose…</option>
              {instruments.map((i) => (
                <option key={i.id} value={i.id}>
                  {i.label}
                </option>
              ))}
            </select>
          </Field>
        </div>
        <Field label="Notes for the client" id={fields.notes.id} errors={fields.notes.errors}>
          <textarea className="input" rows={3} {...getTextareaProps(fields.notes)} />
        </Field>
        <FormError errors={form.errors} />
        <div className="flex justify-end">
          <button type="submit" className="btn-primary" disabled={navigation.state !== "idle"}>
            Send quote
          </button>
        </div>
      </Form>
    </section>
  );
}

export function meta({ data }: Route.MetaArgs) {
  return [
    { title: `${data?.request.title ?? "Request"} — Diffractory` },
    { name: "description", content: "A client's request: acknowledge the hazard declaration, then build and send a quote." },
  ];
}
