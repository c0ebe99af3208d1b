// How Diffractory works, for clients and labs: states, money and the lattice check.
import type { Route } from "./+types/how-it-works";

export function meta(_: Route.MetaArgs) {
  return [
    { title: "How it works — Diffractory" },
    {
      name: "description",
      content: "How Diffractory works for clients and labs: requests and quotes, held payment, delivery, and the automatic lattice-parameter check.",
    },
  ];
}

export default function HowItWorks() {
  return (
    <article className="mx-auto max-w-3xl px-4 py-12 sm:px-6">
      <h1 className="text-3xl font-bold">How it works</h1>
      <section className="mt-8 space-y-3 text-ink-700">
        <h2 className="text-xl font-semibold text-ink-900">Requests and quotes</h2>
        <p>
          A client organisation describes its samples — formula, form, mass, expected phase, crystal system, centering and approximate cell — with a hazard
          declaration for each, and the measurement it needs: a 2θ or d-spacing range, a source preference, temperature points, atmosphere and quality level.
          Diffractory shows which vetted labs can do it and why: the d-spacing range each instrument covers by Bragg's law, its stages, the hazards the lab
          accepts, a fluorescence warning where the sample would fluoresce under the source, an estimated price and the turnaround.
        </p>
        <h2 className="pt-4 text-xl font-semibold text-ink-900">Money held until delivery</h2>
        <p>
          Accepting a quote charges the total, which Diffractory holds. When the client accepts the delivered data — or the review window of seven days lapses —
          the lab is paid the total minus the platform fee. A cancellation before the samples arrive is refunded in full; disputes are settled by an admin.
        </p>
        <h2 className="pt-4 text-xl font-semibold text-ink-900">The lattice check</h2>
        <p>
          Every delivered scan is read, its peaks are found and fitted, converted to d-spacings, indexed against the declared cell and the cell is refined by
          least squares with a zero shift or specimen displacement. The result — refined cell with standard uncertainties, deviation from the declared cell,
          indexed and unindexed peaks, de Wolff M20 and Smith–Snyder F_N — ends in a verdict: consistent, review or inconsistent.
        </p>
      </section>
    </article>
  );
}
