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
      <section className="bg-gradient-to-b from-white to-beam-50">
        <div className="mx-auto max-w-6xl px-4 py-16 sm:px-6 sm:py-24">
          <p className="text-sm font-semibold tracking-wide text-beam-600 uppercase">X-ray and neutron powder diffraction</p>
          <h1 className="mt-3 max-w-3xl text-4xl font-bold sm:text-display">
            Confirm the phase and unit cell of every batch — without owning a diffractometer.
          </h1>
          <p className="mt-6 max-w-2xl text-lg text-ink-600">
            Battery-cathode, pharmaceutical, mineral and catalyst makers post measurement requests. University core facilities and contract labs with idle
            instrument hours quote on them. Each delivered scan is checked against the declared cell within minutes, so both sides know whether the data
            confirms the phase.
          </p>
          <div className="mt-8 flex flex-wrap gap-3">
            <Link to="/create-account" className="btn-primary">
              Create an account
            </Link>
            <Link to="/labs" className="btn-secondary">
              Browse the lab directory
            </Link>
          </div>
        </div>
      </section>
      <section className="mx-auto max-w-6xl px-4 py-16 sm:px-6">
        <h2 className="text-2xl font-bold">How a measurement travels</h2>
        <ol className="mt-8 grid gap-6 sm:grid-cols-2 lg:grid-cols-4">
          {STEPS.map((s, i) => (
            <li key={s.title} className="card">
              <span className="font-mono text-sm text-beam-600">Step {i + 1}</span>
              <h3 className="mt-2 font-semibold">{s.title}</h3>
              <p className="mt-2 text-sm text-ink-600">{s.body}</p>
            </li>
          ))}
        </ol>
        <div className="mt-12 grid gap-6 md:grid-cols-3">
          <div className="card">
            <h3 className="font-semibold">For client companies</h3>
            <p className="mt-2 text-sm text-ink-600">Requests, quotes side by side, payments held until delivery, a data room with checks and plots.</p>
          </div>
          <div className="card">
            <h3 className="font-semibold">For labs</h3>
            <p className="mt-2 text-sm text-ink-600">
              Publish instruments, sources, stages and prices; review hazards; quote; upload straight from the instrument computer; get paid.
            </p>
          </div>
          <div className="card">
            <h3 className="font-semibold">For platform admins</h3>
            <p className="mt-2 text-sm text-ink-600">Vet labs with their calibration scan, settle disputes, read the ledger and the audit log.</p>
          </div>
        </div>
      </section>
    </div>
  );
}
