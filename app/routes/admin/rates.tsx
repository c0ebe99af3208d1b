// /admin/rates — indicative exchange rates (admins only): set a dated rate with its source; the recent ones listed.
// Quotes in other currencies are compared at the latest rate, labelled as indicative (docs/design.md#currencies).
import { data, Form, useNavigation } from "react-router";
import { DateField } from "~/components/date-field";
import { EmptyState, Field, FormError, PageHeader, TableCard } from "~/components/ui";
import { useFormat } from "~/components/locale";
import { parseRate, rateText } from "~/domain/exchange";
import { CURRENCIES } from "~/domain/money";
import { formatterFor, negotiateLocale } from "~/domain/locale";
import { rateProblems, recentRates, setExchangeRate, type RateInput } from "~/models/platform/exchange-rates.server";
import { readForm } from "~/utils/form.server";
import { requireAdmin } from "~/utils/permissions.server";
import { redirectWithToast } from "~/utils/toast.server";
import type { Route } from "./+types/rates";

export async function loader({ request }: Route.LoaderArgs) {
  await requireAdmin(request);
  return { rates: await recentRates(50), today: new Date().toISOString().slice(0, 10) };
}

export async function action({ request }: Route.ActionArgs) {
  const { user } = await requireAdmin(request);
  const form = await readForm(request);
  const text = (name: string) => String(form.get(name) ?? "").trim();
  const input: RateInput = { base: text("base"), quote: text("quote"), rate: text("rate"), asOf: text("asOf"), source: text("source") };
  const problems = rateProblems(input);
  if (Object.keys(problems).length) return data({ problems, values: input }, { status: 400 });
  await setExchangeRate(input, user.id);
  return redirectWithToast("/admin/rates", {
    kind: "success",
    message: `Rate saved: 1 ${input.base} = ${rateText(parseRate(input.rate) as bigint)} ${input.quote} as of ${formatterFor(negotiateLocale(request.headers.get("accept-language"))).date(`${input.asOf}T00:00:00Z`)}.`,
  });
}

export default function Rates({ loaderData, actionData }: Route.ComponentProps) {
  const fmt = useFormat();
  const busy = useNavigation().state !== "idle";
  const problems: Partial<Record<keyof RateInput, string>> = actionData?.problems ?? {};
  const values = actionData?.values;
  const err = (k: keyof RateInput) => (problems[k] ? [problems[k] as string] : null);
  return (
    <div>
      <PageHeader
        title="Exchange rates"
        subtitle="Indicative rates for comparing quotes in different currencies. Clients always pay in the quote's own currency."
      />
      <Form
        method="post"
        key={loaderData.rates[0]?.id ?? "none"}
        className="card mb-6 grid gap-4 sm:grid-cols-2 lg:grid-cols-5 lg:items-start"
        aria-label="Set a rate"
      >
        <Field label="One unit of" id="base" errors={err("base")}>
          <select id="base" name="base" className="input" defaultValue={values?.base ?? "EUR"} aria-describedby="base-error">
            {CURRENCIES.map((c) => (
              <option key={c}>{c}</option>
            ))}
          </select>
        </Field>
        <Field label="Is worth, in" id="quote" errors={err("quote")}>
          <select id="quote" name="quote" className="input" defaultValue={values?.quote ?? "USD"} aria-describedby="quote-error">
            {CURRENCIES.map((c) => (
              <option key={c}>{c}</option>
            ))}
          </select>
        </Field>
        <Field label="Rate" id="rate" errors={err("rate")} hint="e.g. 1.0850">
          <input id="rate" name="rate" className="input" inputMode="decimal" defaultValue={values?.rate ?? ""} aria-describedby="rate-error" />
        </Field>
        <Field label="As of" id="asOf" errors={err("asOf")}>
          <DateField id="asOf" name="asOf" defaultValue={values?.asOf ?? loaderData.today} aria-describedby="asOf-error" />
        </Field>
        <Field label="Source" id="source" errors={err("source")} hint="Where the rate comes from">
          <input id="source" name="source" className="input" maxLength={200} defaultValue={values?.source ?? ""} aria-describedby="source-error" />
        </Field>
        <div className="sm:col-span-2 lg:col-span-5">
          <FormError errors={Object.keys(problems).length ? ["The rate was not saved; see the fields above."] : null} />
          <button type="submit" className="btn-primary" disabled={busy}>
            Save the rate
          </button>
        </div>
      </Form>
      <h2 className="mb-3 text-lg font-semibold">Recent rates</h2>
      {loaderData.rates.length === 0 ? (
        <EmptyState title="No rates yet">Until a rate is set, quotes in another currency say that no rate is set instead of converting.</EmptyState>
      ) : (
        <TableCard columns={["Rate", "As of", "Source", "Set"]} caption="Recent exchange rates">
          {loaderData.rates.map((r) => (
            <tr key={r.id}>
              <td className="whitespace-nowrap font-mono">
                1 {r.base} = {rateText(parseRate(r.rate) ?? 0n)} {r.quote}
              </td>
              <td className="whitespace-nowrap">{fmt.date(r.asOf)}</td>
              <td>{r.source || "—"}</td>
              <td className="whitespace-nowrap">{fmt.dateTime(r.setAt)}</td>
            </tr>
          ))}
        </TableCard>
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Exchange rates — Diffractory" },
    { name: "description", content: "Indicative exchange rates used to compare quotes in other currencies: set a dated rate with its source." },
  ];
}
