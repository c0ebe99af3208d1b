// The public lab directory: filters kept in the URL, results fetched from /api/labs with TanStack Query.
import { Formula } from "~/components/symbols";
import { keepPreviousData, useQuery } from "@tanstack/react-query";
import { Link, useSearchParams } from "react-router";
import { EmptyState, PageHeader } from "~/components/ui";
import { PAGE_SIZE, TECHNIQUES, parseDirectoryQuery } from "~/domain/directory-query";
import { cachedDirectory, type DirectoryLab } from "~/models/labs/directory.server";
import { GHS_CODES, SPECIAL_CATEGORY_CODES, ghsName } from "~/domain/hazard-codes";
import { labelOf } from "~/domain/matching";
import { ANODES } from "~/diffraction/wavelengths";
import type { Route } from "./+types/labs";
import { useFormat } from "~/components/locale";

type DirectoryResult = { labs: DirectoryLab[]; total: number; page: number };

// Public by design. The first page is rendered on the server; later filter changes only refetch the API.
export async function loader({ request }: Route.LoaderArgs) {
  const url = new URL(request.url);
  const parsed = parseDirectoryQuery(url.searchParams);
  const initial = parsed.ok ? (await cachedDirectory(parsed.filters)).result : null;
  return {
    initial,
    initialQuery: url.searchParams.toString(),
    options: { techniques: [...TECHNIQUES], sources: [...ANODES], ghs: [...GHS_CODES], categories: [...SPECIAL_CATEGORY_CODES] },
  };
}

export function shouldRevalidate() {
  return false;
}

async function fetchLabs(query: string): Promise<DirectoryResult> {
  const res = await fetch(`/api/labs?${query}`, { headers: { Accept: "application/json" } });
  const body = await res.json();
  if (!res.ok) throw new Error(body.error ?? `The directory could not be loaded (${res.status}).`);
  return body;
}

export default function LabDirectory({ loaderData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { initial, initialQuery, options } = loaderData;
  const [params, setParams] = useSearchParams();
  const query = params.toString();
  const labs = useQuery({
    queryKey: ["labs", query],
    queryFn: () => fetchLabs(query),
    initialData: query === initialQuery && initial ? initial : undefined,
    placeholderData: keepPreviousData,
  });

  function update(name: string, value: string | string[]) {
    const next = new URLSearchParams(params);
    next.delete(name);
    for (const v of Array.isArray(value) ? value : [value]) if (v !== "") next.append(name, v);
    if (name !== "page") next.delete("page");
    setParams(next, { replace: true, preventScrollReset: true });
  }
  const hazards = params.getAll("hazard");
  const data = labs.data;
  const pages = data ? Math.max(1, Math.ceil(data.total / PAGE_SIZE)) : 1;

  return (
    <div className="mx-auto max-w-6xl px-4 py-10 sm:px-6">
      <PageHeader title="Lab directory" subtitle="Vetted labs, what their instruments reach, their stages, the hazards they accept and their prices." />
      <div className="grid gap-8 lg:grid-cols-[18rem_1fr]">
        {/* biome-ignore lint/a11y/useSemanticElements: a form with the search role is announced as a search landmark everywhere the <search> element is not yet */}
        <form className="card space-y-4 self-start" role="search" aria-label="Filter labs" onSubmit={(e) => e.preventDefault()}>
          <div>
            <label className="label" htmlFor="q">
              Search
            </label>
            <input
              id="q"
              className="input"
              type="search"
              defaultValue={params.get("q") ?? ""}
              placeholder="Name, city, country…"
              onChange={(e) => update("q", e.currentTarget.value)}
            />
          </div>
          <div>
            <label className="label" htmlFor="technique">
              Technique
            </label>
            <select id="technique" className="input" value={params.get("technique") ?? ""} onChange={(e) => update("technique", e.currentTarget.value)}>
              <option value="">Any technique</option>
              {options.techniques.map((t) => (
                <option key={t} value={t}>
                  {labelOf(t)}
                </option>
              ))}
            </select>
          </div>
          <div>
            <label className="label" htmlFor="source">
              Source (anode)
            </label>
            <select id="source" className="input" value={params.get("source") ?? ""} onChange={(e) => update("source", e.currentTarget.value)}>
              <option value="">Any source</option>
              {options.sources.map((s) => (
                <option key={s} value={s}>
                  {s}
                </option>
              ))}
            </select>
          </div>
          <div className="grid grid-cols-2 gap-3">
            <div>
              <label className="label" htmlFor="dMin">
                Smallest <i className="symbol">d</i> (Å)
              </label>
              <input
                id="dMin"
                className="input"
                inputMode="decimal"
                defaultValue={params.get("dMin") ?? ""}
                onChange={(e) => update("dMin", e.currentTarget.value)}
              />
            </div>
            <div>
              <label className="label" htmlFor="temperatureK">
                Temperature (K)
              </label>
              <input
                id="temperatureK"
                className="input"
                inputMode="decimal"
                defaultValue={params.get("temperatureK") ?? ""}
                onChange={(e) => update("temperatureK", e.currentTarget.value)}
              />
            </div>
            <div>
              <label className="label" htmlFor="maxPrice">
                Max per sample
              </label>
              <input
                id="maxPrice"
                className="input"
                inputMode="decimal"
                defaultValue={params.get("maxPrice") ?? ""}
                onChange={(e) => update("maxPrice", e.currentTarget.value)}
              />
            </div>
            <div>
              <label className="label" htmlFor="turnaroundDays">
                Turnaround ≤ days
              </label>
              <input
                id="turnaroundDays"
                className="input"
                inputMode="numeric"
                defaultValue={params.get("turnaroundDays") ?? ""}
                onChange={(e) => update("turnaroundDays", e.currentTarget.value)}
              />
            </div>
          </div>
          <fieldset>
            <legend className="label">Hazards the lab must accept</legend>
            <div className="grid grid-cols-1 gap-1 text-sm">
              {[...options.ghs, ...options.categories].map((h) => (
                <label key={h} className="flex items-center gap-2">
                  <input
                    type="checkbox"
                    checked={hazards.includes(h)}
                    onChange={(e) => update("hazard", e.currentTarget.checked ? [...hazards, h] : hazards.filter((x) => x !== h))}
                  />
                  {h.startsWith("GHS") ? `${h} ${ghsName(h).toLowerCase()}` : labelOf(h)}
                </label>
              ))}
            </div>
          </fieldset>
        </form>
        <section aria-label="Labs" aria-busy={labs.isFetching}>
          <div className="mb-3 flex min-h-6 items-center justify-between text-sm text-ink-600">
            <span role="status">{labs.isError ? "" : data ? `${data.total} ${data.total === 1 ? "lab" : "labs"}` : "Loading labs…"}</span>
            {labs.isFetching ? <span>Updating…</span> : null}
          </div>
          {labs.isError ? (
            <p role="alert" className="rounded-lg border border-danger-600/30 bg-danger-50 p-4 text-sm text-danger-700">
              {(labs.error as Error).message}
            </p>
          ) : data && data.labs.length === 0 ? (
            <EmptyState
              title="No lab matches these filters"
              action={
                <Link to="/labs" className="btn-secondary">
                  Clear all filters
                </Link>
              }
            >
              Loosen a filter — a larger smallest d, another source, or fewer hazards.
            </EmptyState>
          ) : (
            <ul className="space-y-3">
              {data?.labs.map((lab) => (
                <li key={lab.slug} className="card">
                  <div className="flex flex-wrap items-baseline justify-between gap-2">
                    <h2 className="text-lg font-semibold">
                      <Link to={`/labs/${lab.slug}`} className="hover:underline">
                        {lab.name}
                      </Link>
                    </h2>
                    <span className="text-sm text-ink-600">{[lab.city, lab.country].filter(Boolean).join(", ")}</span>
                  </div>
                  <dl className="mt-3 grid grid-cols-2 gap-x-6 gap-y-1 text-sm sm:grid-cols-3">
                    <div>
                      <dt className="text-ink-500">Techniques</dt>
                      <dd>{lab.techniques.map(labelOf).join(", ") || "—"}</dd>
                    </div>
                    <div>
                      <dt className="text-ink-500">Sources</dt>
                      <dd>{lab.sources.join(", ") || "—"}</dd>
                    </div>
                    <div>
                      <dt className="text-ink-500">
                        Smallest <i className="symbol">d</i>
                      </dt>
                      <dd>{lab.minD !== null ? `${lab.minD.toFixed(3)} Å` : "—"}</dd>
                    </div>
                    <div>
                      <dt className="text-ink-500">Temperatures</dt>
                      <dd>{lab.temperatureRangeK ? `${lab.temperatureRangeK[0]}–${lab.temperatureRangeK[1]} K` : "ambient"}</dd>
                    </div>
                    <div>
                      <dt className="text-ink-500">From</dt>
                      <dd>{lab.priceFrom !== null && lab.currency ? `${fmt.money(lab.priceFrom, lab.currency)} per sample` : "—"}</dd>
                    </div>
                    <div>
                      <dt className="text-ink-500">Turnaround</dt>
                      <dd>{lab.turnaroundDays ? `${lab.turnaroundDays} days` : "—"}</dd>
                    </div>
                    <div className="col-span-2 sm:col-span-3">
                      <dt className="text-ink-500">Measured accuracy</dt>
                      <dd>
                        {lab.accuracy?.length ? (
                          <ul>
                            {lab.accuracy.map((a) => (
                              <li key={`${a.instrumentName}-${a.standard}`}>
                                {a.instrumentName} — <Formula>{a.text}</Formula>
                              </li>
                            ))}
                          </ul>
                        ) : (
                          "No calibration scans on record"
                        )}
                      </dd>
                    </div>
                    <div className="col-span-2 sm:col-span-3">
                      <dt className="text-ink-500">Delivery</dt>
                      <dd>{lab.onTime?.text ?? "—"}</dd>
                    </div>
                  </dl>
                </li>
              ))}
            </ul>
          )}
          {pages > 1 ? (
            <nav aria-label="Pages" className="mt-4 flex items-center gap-3 text-sm">
              <button type="button" className="btn-secondary" disabled={(data?.page ?? 1) <= 1} onClick={() => update("page", String((data?.page ?? 1) - 1))}>
                Previous
              </button>
              <span>
                Page {data?.page ?? 1} of {pages}
              </span>
              <button
                type="button"
                className="btn-secondary"
                disabled={(data?.page ?? 1) >= pages}
                onClick={() => update("page", String((data?.page ?? 1) + 1))}
              >
                Next
              </button>
            </nav>
          ) : null}
        </section>
      </div>
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Lab directory — Diffractory" },
    {
      name: "description",
      content: "Find a vetted powder-diffraction lab by technique, X-ray source, d-spacing reach, temperature, accepted hazards, price and turnaround.",
    },
  ];
}
