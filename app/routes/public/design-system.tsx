// The design page: Diffractory's tokens and building blocks as they render, for people who build or review screens.
// The rules behind them: docs/design-system.md. The colour swatches are read from app/app.css itself, so the page
// cannot drift from the tokens.
import { DateField } from "~/components/date-field";
import type { ReactNode } from "react";
import { Link } from "react-router";
import appCss from "~/app.css?raw";
import { CellHeading, CellSymbol, Formula, Hkl, HklHeading, TwoTheta } from "~/components/symbols";
import { Badge, type BadgeTone, DiffractionRingsIcon, EmptyState, Field, PageHeader } from "~/components/ui";
import type { Route } from "./+types/design-system";

// Public page: no loader data, nobody to check.
export function meta(_: Route.MetaArgs) {
  return [
    { title: "Design system — Diffractory" },
    { name: "description", content: "Diffractory's colours, type, buttons, fields, badges, cards, tables and symbols, each shown as it renders." },
  ];
}

/** The colour tokens of app/app.css, grouped by family in the order they are written there. */
function colourTokens() {
  const families = new Map<string, { step: string; value: string }[]>();
  for (const m of appCss.matchAll(/--color-([a-z]+)-(\d+):\s*(#[0-9a-f]{3,8})/gi)) {
    const list = families.get(m[1]) ?? [];
    list.push({ step: m[2], value: m[3] });
    families.set(m[1], list);
  }
  return [...families];
}

const FAMILY_NOTES: Record<string, string> = {
  ink: "Warm greys: text, rules, the paper ground.",
  beam: "The brand colour: primary actions, links, the rail, the observed curve.",
  anode: "Copper accent: the current place, the calculated curve, highlights.",
  ok: "Done, accepted, consistent.",
  caution: "Needs a look: review verdicts, hazards, waiting on someone.",
  danger: "Refused, failed, inconsistent, destructive actions.",
};

const TYPE_SCALE = [
  { name: "Display", className: "font-display text-display font-semibold", token: "text-display · 40 px", sample: "Checked data, every batch" },
  {
    name: "Page title",
    className: "font-display text-title font-semibold",
    token: "text-title · 28 px (24 px on a phone)",
    sample: "Lattice check of lot HC-2645",
  },
  { name: "Section", className: "font-display text-xl font-semibold", token: "text-xl · 20 px", sample: "Refined cell" },
  { name: "Lead", className: "text-lg", token: "text-lg · 18 px", sample: "Each delivered scan is checked against the declared cell." },
  { name: "Body", className: "text-sm", token: "text-sm · 14 px", sample: "Tables, forms and running text on working screens." },
  { name: "Small", className: "text-xs text-ink-600", token: "text-xs · 12 px", sample: "Hints under fields, badges, table notes." },
  { name: "Fine print", className: "text-2xs text-ink-600", token: "text-2xs · 11 px", sample: "Axis ticks, footnotes." },
];

const BADGES: { tone: BadgeTone; word: string; shape: string; use: string }[] = [
  { tone: "neutral", word: "Draft", shape: "ring", use: "Not started, closed, archived." },
  { tone: "brand", word: "Quoted", shape: "diamond", use: "Moving along: open, quoted, in progress." },
  { tone: "ok", word: "Consistent", shape: "tick in a circle", use: "Done, paid, accepted, consistent." },
  { tone: "caution", word: "Review", shape: "triangle with a bar", use: "Someone should look: review, waiting, hazard declared." },
  { tone: "danger", word: "Inconsistent", shape: "crossed octagon", use: "Refused, failed, disputed, inconsistent." },
];

/** Cells of invented demo phases (values of the kind the check reports, not measured here). */
const CELLS = [
  { phase: "LiNi0.8Mn0.1Co0.1O2", system: "hexagonal", a: "2.8718(2)", b: "2.8718(2)", c: "14.2031(9)", alpha: "90", beta: "90", gamma: "120", V: "101.44(1)" },
  { phase: "LiFePO4", system: "orthorhombic", a: "10.3290(6)", b: "6.0065(4)", c: "4.6908(3)", alpha: "90", beta: "90", gamma: "90", V: "291.02(3)" },
  {
    phase: "CuSO4·5H2O",
    system: "triclinic",
    a: "6.122(1)",
    b: "10.695(2)",
    c: "5.968(1)",
    alpha: "82.35(1)",
    beta: "107.33(1)",
    gamma: "102.60(1)",
    V: "364.2(1)",
  },
];

/** Silicon with Cu Kα1 (λ = 1.540 56 Å, a = 5.431 Å): d from the cell, 2θ by Bragg's law (common practice, rounded);
    relative intensities from memory, for show only. */
const PEAKS = [
  { hkl: "1 1 1", twoTheta: "28.44", d: "3.1357", rel: "100" },
  { hkl: "2 2 0", twoTheta: "47.30", d: "1.9202", rel: "55" },
  { hkl: "3 1 1", twoTheta: "56.12", d: "1.6375", rel: "30" },
  { hkl: "4 0 0", twoTheta: "69.13", d: "1.3578", rel: "6" },
  { hkl: "3 3 1", twoTheta: "76.38", d: "1.2460", rel: "11" },
];

/** A card whose table scrolls sideways is a keyboard stop with a name (WCAG 2.1.1; axe "scrollable-region-focusable"). */
const scrollStop = (name: string) => ({ tabIndex: 0, role: "region", "aria-label": name }) as const;

const CELL_NAMES = ["a", "b", "c", "alpha", "beta", "gamma", "V"] as const;

function Section({ id, title, children, note }: { id: string; title: string; note?: ReactNode; children: ReactNode }) {
  return (
    <section aria-labelledby={id} className="border-t border-ink-200 py-8 first-of-type:border-t-0 first-of-type:pt-0">
      <h2 id={id} className="font-display text-xl font-semibold">
        {title}
      </h2>
      {note ? <p className="mt-1 max-w-3xl text-sm text-ink-600">{note}</p> : null}
      <div className="mt-5">{children}</div>
    </section>
  );
}

export default function DesignSystem() {
  const families = colourTokens();
  return (
    <div className="mx-auto max-w-6xl px-4 py-8 sm:px-6 sm:py-10">
      <PageHeader
        title="Design system"
        subtitle="Diffractory's colours, type and building blocks, each shown as it renders on the working screens. The rules behind them are in the project's docs/design-system.md."
      />

      <Section id="colours" title="Colours" note="Tokens of app/app.css; each is a Tailwind colour (bg-beam-600, text-anode-600, border-ink-200 …).">
        <div className="space-y-5">
          {families.map(([family, steps]) => (
            <div key={family} className="grid gap-2 md:grid-cols-[11rem_1fr] md:gap-4">
              <div>
                <p className="font-semibold">{family}</p>
                <p className="text-xs text-ink-600">{FAMILY_NOTES[family]}</p>
              </div>
              <ul className="grid grid-cols-3 gap-1.5 sm:grid-cols-5 lg:grid-cols-10">
                {steps.map((s) => (
                  <li key={s.step} className="overflow-hidden rounded-badge border border-ink-200 bg-white">
                    <div className="h-8" style={{ background: `var(--color-${family}-${s.step})` }} />
                    <div className="px-1 py-1 text-[0.625rem] leading-4">
                      <code className="block font-mono text-ink-800">
                        {family}-{s.step}
                      </code>
                      <span className="font-mono text-ink-500">{s.value}</span>
                    </div>
                  </li>
                ))}
              </ul>
            </div>
          ))}
        </div>
      </Section>

      <Section
        id="badges"
        title="Badges"
        note="A state is a word, a shape and a colour together, on a squared tag with a stronger left edge — never colour alone, never a pill."
      >
        <table className="table">
          <caption className="sr-only">Badge tones</caption>
          <thead>
            <tr>
              <th scope="col">Badge</th>
              <th scope="col">Tone</th>
              <th scope="col">Shape</th>
              <th scope="col" className="max-sm:hidden">
                Used for
              </th>
            </tr>
          </thead>
          <tbody>
            {BADGES.map((b) => (
              <tr key={b.tone}>
                <td>
                  <Badge tone={b.tone}>{b.word}</Badge>
                </td>
                <td className="font-mono text-xs">{b.tone}</td>
                <td>{b.shape}</td>
                <td className="text-ink-600 max-sm:hidden">{b.use}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </Section>

      <Section
        id="tables"
        title="Tables and symbols"
        note="Sentence-case headings on a dark rule, tabular figures, quiet row rules. Cell symbols in italics, hkl in lower case with a bar over a negative index, formulas with subscripts, units as written (Å, °)."
      >
        {/* A wide table scrolls inside its card on a phone, with a keyboard stop and a name, as TableCard does. */}
        <div className="card overflow-x-auto p-0" {...scrollStop("Refined cells")}>
          <table className="table">
            <caption className="px-3 pt-3 pb-1 text-left font-semibold">Refined cells</caption>
            <thead>
              <tr>
                <th scope="col">Phase</th>
                <th scope="col">System</th>
                {CELL_NAMES.map((n) => (
                  <th key={n} scope="col" className="text-right whitespace-nowrap">
                    <CellHeading name={n} />
                  </th>
                ))}
              </tr>
            </thead>
            <tbody>
              {CELLS.map((c) => (
                <tr key={c.phase}>
                  <td className="whitespace-nowrap">
                    <Formula>{c.phase}</Formula>
                  </td>
                  <td>{c.system}</td>
                  {CELL_NAMES.map((n) => (
                    <td key={n} className="text-right whitespace-nowrap">
                      {c[n]}
                    </td>
                  ))}
                </tr>
              ))}
            </tbody>
          </table>
        </div>
        <div className="mt-6 grid gap-6 lg:grid-cols-[minmax(0,26rem)_1fr]">
          <div className="card overflow-x-auto p-0">
            <table className="table">
              <caption className="px-3 pt-3 pb-1 text-left font-semibold">Peaks of silicon, Cu Kα₁</caption>
              <thead>
                <tr>
                  <th scope="col">
                    <HklHeading />
                  </th>
                  <th scope="col" className="text-right">
                    <TwoTheta unit />
                  </th>
                  <th scope="col" className="text-right">
                    <i className="symbol">d</i> (Å)
                  </th>
                  <th scope="col" className="text-right">
                    <i className="symbol">I</i>/<i className="symbol">I</i>
                    <sub>max</sub>
                  </th>
                </tr>
              </thead>
              <tbody>
                {PEAKS.map((p) => (
                  <tr key={p.hkl}>
                    <td>
                      <Hkl indices={p.hkl} />
                    </td>
                    <td className="text-right">{p.twoTheta}</td>
                    <td className="text-right">{p.d}</td>
                    <td className="text-right">{p.rel}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
          <ul className="space-y-2 text-sm">
            <li>
              Formulas: <Formula>LiNi0.8Mn0.1Co0.1O2</Formula>, <Formula>CuSO4·5H2O</Formula>, <Formula>Ca10(PO4)6(OH)2</Formula>, <Formula>Fe3+</Formula>
            </li>
            <li>
              Cell: <CellSymbol name="a" /> = <CellSymbol name="b" /> ≠ <CellSymbol name="c" />, <CellSymbol name="alpha" /> = <CellSymbol name="beta" /> = 90°,{" "}
              <CellSymbol name="gamma" /> = 120°, <CellSymbol name="V" /> in Å³
            </li>
            <li>
              Planes and families: <Hkl indices="1 1 0" brackets="()" />, <Hkl indices="-1 1 2" brackets="()" />, <Hkl indices="1 0 12" brackets="()" />,{" "}
              <Hkl indices="1 1 1" brackets="{}" />
            </li>
            <li>
              Angles and lengths: <TwoTheta /> = 28.44°, <i className="symbol">λ</i> = 1.540 56 Å, Kα₁ and Kβ
            </li>
          </ul>
        </div>
      </Section>

      <Section id="type" title="Type" note="DM Sans for reading; Source Serif 4 for titles and symbols (it draws Greek). Nothing is upper-cased.">
        <table className="table">
          <caption className="sr-only">Type scale</caption>
          <thead>
            <tr>
              <th scope="col">Step and token</th>
              <th scope="col">Sample</th>
            </tr>
          </thead>
          <tbody>
            {TYPE_SCALE.map((t) => (
              <tr key={t.name}>
                <td className="w-40 sm:w-64">
                  {t.name}
                  <span className="block font-mono text-xs text-ink-600">{t.token}</span>
                </td>
                <td className={t.className}>{t.sample}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </Section>

      <Section
        id="buttons"
        title="Buttons and fields"
        note="One primary action per screen; danger only for what cannot be undone; quiet for the small in-line ones."
      >
        <div className="flex flex-wrap items-center gap-3">
          <button type="button" className="btn-primary">
            Send the quote
          </button>
          <button type="button" className="btn-secondary">
            Save as draft
          </button>
          <button type="button" className="btn-danger">
            Withdraw the request
          </button>
          <button type="button" className="btn-quiet">
            Cancel
          </button>
          <button type="button" className="btn-primary" disabled>
            Sending…
          </button>
        </div>
        <form className="mt-6 grid max-w-3xl gap-x-6 sm:grid-cols-2" onSubmit={(e) => e.preventDefault()}>
          <Field label="Product code" id="ds-code" hint="As printed on the batch label.">
            <input id="ds-code" className="input" defaultValue="HC-2645" aria-describedby="ds-code-error" />
          </Field>
          <Field label="Declared formula" id="ds-formula" errors={["“Xx” in LiXxPO4 is not an element symbol."]}>
            <input id="ds-formula" className="input" defaultValue="LiXxPO4" aria-invalid="true" aria-describedby="ds-formula-error" />
          </Field>
          <Field label="Source" id="ds-source">
            <select id="ds-source" className="input" defaultValue="co" aria-describedby="ds-source-error">
              <option value="cu">Cu Kα</option>
              <option value="co">Co Kα</option>
              <option value="mo">Mo Kα</option>
            </select>
          </Field>
          <Field label="Needed by" id="ds-date">
            <DateField id="ds-date" name="neededBy" defaultValue="2026-12-04" aria-describedby="ds-date-error" />
          </Field>
        </form>
      </Section>

      <Section
        id="cards"
        title="Cards and empty states"
        note="White on the paper ground, a thin rule, no shadow; a title strip when the card holds a list or a table."
      >
        <div className="grid gap-6 md:grid-cols-2">
          <div className="card">
            <div className="card-head">
              <span>
                Order of <Formula>LiFePO4</Formula> lot HC-2645
              </span>
              <Badge tone="caution">Review</Badge>
            </div>
            <dl className="grid grid-cols-[auto_1fr] gap-x-6 gap-y-1 text-sm">
              <dt className="text-ink-600">Lab</dt>
              <dd>Granite Ridge Characterisation</dd>
              <dt className="text-ink-600">Source</dt>
              <dd>
                Co Kα, 15–110° <TwoTheta />
              </dd>
              <dt className="text-ink-600">Verdict</dt>
              <dd>
                <CellSymbol name="c" /> is 0.4 % longer than declared
              </dd>
            </dl>
            <div className="mt-5 flex gap-2">
              <Link to="/how-it-works" className="btn-secondary">
                How checks work
              </Link>
            </div>
          </div>
          <EmptyState title="No orders yet">Accepted quotes become orders here, with their samples, files and checks.</EmptyState>
        </div>
      </Section>

      <Section id="mark" title="The mark" note="Debye–Scherrer rings: beam on light grounds, copper on the dark rail.">
        <div className="flex flex-wrap items-center gap-6">
          <DiffractionRingsIcon className="h-12 w-12 text-beam-600" />
          <div className="rounded-card bg-beam-900 p-3">
            <DiffractionRingsIcon className="h-12 w-12 text-anode-200" />
          </div>
        </div>
      </Section>
    </div>
  );
}
