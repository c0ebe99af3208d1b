// The public home page: what Diffractory does, for whom.
import { Link } from "react-router";
import type { Route } from "./+types/home";

// Public page: no loader data, nobody to check.
export function meta(_: Route.MetaArgs) {
  return [
    { title: "Diffractory — powder-diffraction measurements, bought and sold" },
    {
      name: "description",
      content:
        "Labs with diffractometers sell instrument time; companies that make crystalline materials buy measurements with an automatic lattice-parameter check.",
    },
  ];
}

const STEPS = [
  { title: "Post a request", body: "Describe your samples, their declared phase and cell, and a hazard declaration for each one." },
  { title: "Compare quotes", body: "Vetted labs whose instruments cover your d-spacing range, temperatures and hazards send offers." },
  { title: "Pay into holding", body: "The total is held by Diffractory until the data is delivered and you accept it." },
  { title: "Get checked data", body: "Every scan lands in your data room with an automatic lattice-parameter check and its verdict." },
];

export default function Home() {
  return (
    <div>
      <section className="relative overflow-hidden bg-beam-900 text-beam-50">
        {/* Debye–Scherrer rings as the hero's ground: the product's mark, drawn large and faint. */}
        <svg
          viewBox="0 0 400 400"
          className="pointer-events-none absolute -top-36 -right-48 h-[26rem] w-[26rem] text-beam-700 sm:top-1/2 sm:-right-24 sm:h-[36rem] sm:w-[36rem] sm:-translate-y-1/2 lg:right-0"
          aria-hidden="true"
          fill="none"
          stroke="currentColor"
        >
          <circle cx="200" cy="200" r="8" fill="var(--color-anode-500)" stroke="none" />
          <circle cx="200" cy="200" r="52" strokeWidth="3" />
          <circle cx="200" cy="200" r="88" strokeWidth="2" strokeDasharray="18 8" />
          <circle cx="200" cy="200" r="120" strokeWidth="4" />
          <circle cx="200" cy="200" r="150" strokeWidth="1.5" strokeDasharray="4 6" />
          <circle cx="200" cy="200" r="176" strokeWidth="2.5" />
          <circle cx="200" cy="200" r="196" strokeWidth="1" />
        </svg>
        <div className="relative mx-auto max-w-6xl px-4 py-14 sm:px-6 sm:py-24">
          <p className="flex items-center gap-3 text-sm font-semibold text-anode-200">
            <span aria-hidden="true" className="h-px w-8 bg-anode-500" />
            X-ray and neutron powder diffraction
          </p>
          <h1 className="mt-4 max-w-3xl text-3xl text-white sm:text-display">
            Confirm the phase and unit cell of every batch — without owning a diffractometer.
          </h1>
          <p className="mt-6 max-w-2xl text-base text-beam-100 sm:text-lg">
            Battery-cathode, pharmaceutical, mineral and catalyst makers post measurement requests. University core facilities and contract labs with idle
            instrument hours quote on them. Each delivered scan is checked against the declared cell within minutes, so both sides know whether the data
            confirms the phase.
          </p>
          <div className="mt-8 flex flex-wrap gap-3">
            <Link to="/create-account" className="btn border-anode-700 bg-anode-600 text-white hover:bg-anode-700">
              Create an account
            </Link>
            <Link to="/labs" className="btn border-beam-500 text-beam-50 hover:bg-beam-800">
              Browse the lab directory
            </Link>
          </div>
        </div>
      </section>
      <section className="mx-auto max-w-6xl px-4 py-14 sm:px-6">
        <h2 className="font-display text-2xl font-semibold">How a measurement travels</h2>
        <ol className="mt-8 grid gap-px overflow-hidden rounded-card border border-ink-200 bg-ink-200 sm:grid-cols-2 lg:grid-cols-4">
          {STEPS.map((s, i) => (
            <li key={s.title} className="bg-white p-6">
              <span className="font-display text-3xl leading-none font-semibold text-anode-600 tabular-nums" aria-hidden="true">
                {i + 1}
              </span>
              <h3 className="mt-3 font-semibold">
                <span className="sr-only">Step {i + 1}: </span>
                {s.title}
              </h3>
              <p className="mt-2 text-sm text-ink-600">{s.body}</p>
            </li>
          ))}
        </ol>
        <div className="mt-12 grid gap-6 md:grid-cols-3">
          <div className="card border-t-[3px] border-t-beam-600">
            <h3 className="font-display text-lg font-semibold">For client companies</h3>
            <p className="mt-2 text-sm text-ink-600">Requests, quotes side by side, payments held until delivery, a data room with checks and plots.</p>
          </div>
          <div className="card border-t-[3px] border-t-beam-600">
            <h3 className="font-display text-lg font-semibold">For labs</h3>
            <p className="mt-2 text-sm text-ink-600">
              Publish instruments, sources, stages and prices; review hazards; quote; upload straight from the instrument computer; get paid.
            </p>
          </div>
          <div className="card border-t-[3px] border-t-beam-600">
            <h3 className="font-display text-lg font-semibold">For platform admins</h3>
            <p className="mt-2 text-sm text-ink-600">Vet labs with their calibration scan, settle disputes, read the ledger and the audit log.</p>
          </div>
        </div>
      </section>
    </div>
  );
}
