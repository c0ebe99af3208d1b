// The fields of a declared phase — crystal system, centering, approximate cell — the lists of further expected phases
// and candidate forms, and the acceptance window: the request wizard's samples step and a material's form share them.
import { getInputProps, getSelectProps, type FieldMetadata, type FormMetadata } from "@conform-to/react";
import { Options } from "~/components/request-parts";
import { CellHeading, CellSymbol } from "~/components/symbols";
import { FieldErrors, Field } from "~/components/ui";
import { CENTERINGS, CRYSTAL_SYSTEMS, type CrystalSystem } from "~/diffraction/cell";
import type { CellKey } from "~/diffraction/phases";
import { freeCellParameters } from "~/diffraction/window";
import { CELL_PARAMETER_LABELS, type PhaseRow, type WindowInput } from "~/domain/request-forms";

/** A form's list buttons (add, remove), whatever its schema. */
type ListForm = Pick<FormMetadata, "insert" | "remove">;
type CellFieldset = Pick<ReturnType<FieldMetadata<PhaseRow>["getFieldset"]>, "cellA" | "cellB" | "cellC" | "cellAlpha" | "cellBeta" | "cellGamma">;
export type PhaseDefaults = Partial<Record<keyof PhaseRow, string>>;
export type WindowDefaults = Partial<Record<CellKey, { plusMinus?: string; unit?: string }>>;
export const EMPTY_PHASE: PhaseDefaults = { cellAlpha: "90", cellBeta: "90", cellGamma: "90" };

/** The crystal system and lattice centering selects of a phase. */
export function SystemFields({ system, centering }: { system: FieldMetadata<string>; centering: FieldMetadata<string> }) {
  return (
    <div className="grid grid-cols-2 gap-3">
      <Field label="Crystal system" id={system.id} errors={system.errors}>
        <select className="input" {...getSelectProps(system)}>
          <option value="">Choose…</option>
          <Options list={CRYSTAL_SYSTEMS} />
        </select>
      </Field>
      <Field label="Centering" id={centering.id} errors={centering.errors}>
        <select className="input" {...getSelectProps(centering)}>
          <option value="">Choose…</option>
          <Options list={CENTERINGS} />
        </select>
      </Field>
    </div>
  );
}

/** The six cell fields of a phase; the crystal system's rules are checked with the rest of the form. */
export function CellFields({ cell, legend }: { cell: CellFieldset; legend: string }) {
  const cellFields = [
    ["a", cell.cellA],
    ["b", cell.cellB],
    ["c", cell.cellC],
    ["alpha", cell.cellAlpha],
    ["beta", cell.cellBeta],
    ["gamma", cell.cellGamma],
  ] as const;
  return (
    <fieldset>
      <legend className="label">{legend}</legend>
      <div className="grid grid-cols-3 gap-3 sm:grid-cols-6">
        {cellFields.map(([label, field]) => (
          <div key={field.name}>
            <label htmlFor={field.id} className="text-xs text-ink-600">
              <CellHeading name={label} />
            </label>
            <input className="input" inputMode="decimal" {...getInputProps(field, { type: "text" })} />
          </div>
        ))}
      </div>
      <FieldErrors id={`${cell.cellA.id}-cell-error`} errors={cellFields.flatMap(([, c]) => c.errors ?? [])} />
    </fieldset>
  );
}

/** A sample's further expected phases or its candidate forms: rows of name, system, centering and cell. */
export function PhaseList({
  list,
  form,
  title,
  explanation,
  rowLabel,
  addLabel,
  max,
}: {
  list: FieldMetadata<PhaseRow[]>;
  form: ListForm;
  title: string;
  explanation: string;
  rowLabel: string;
  addLabel: string;
  max: number;
}) {
  const rows = list.getFieldList();
  return (
    <fieldset className="space-y-2 border-t border-ink-100 pt-3">
      <legend className="text-sm font-semibold text-ink-700">{title}</legend>
      <p className="text-xs text-ink-500">
        {explanation} Optional; up to {max}.
      </p>
      {rows.map((row, i) => {
        const p = row.getFieldset();
        return (
          <fieldset key={row.key} className="space-y-2 rounded-md border border-ink-200 p-3" aria-label={`${rowLabel} ${i + 1}`}>
            <div className="flex items-center justify-between">
              <span className="text-sm font-medium">
                {rowLabel} {i + 1}
              </span>
              <button type="submit" className="btn-quiet" {...form.remove.getButtonProps({ name: list.name, index: i })}>
                Remove {rowLabel.toLowerCase()} {i + 1}
              </button>
            </div>
            <FieldErrors id={`${row.id}-error`} errors={row.errors} />
            <div className="grid gap-3 sm:grid-cols-3">
              <Field label="Name (optional)" id={p.name.id} errors={p.name.errors} hint="e.g. Li3PO4, Form II">
                <input className="input" {...getInputProps(p.name, { type: "text" })} />
              </Field>
              <SystemFields system={p.crystalSystem} centering={p.centering} />
            </div>
            <CellFields cell={p} legend="Approximate cell" />
          </fieldset>
        );
      })}
      <FieldErrors id={`${list.id}-error`} errors={list.errors} />
      {rows.length < max ? (
        <button type="submit" className="btn-secondary" {...form.insert.getButtonProps({ name: list.name, defaultValue: EMPTY_PHASE })}>
          {addLabel}
        </button>
      ) : null}
    </fieldset>
  );
}

/** The optional acceptance window: ± an amount or a percentage on each cell parameter the crystal system leaves free. */
export function WindowFields({ window, system }: { window: FieldMetadata<WindowInput | undefined>; system: string | undefined }) {
  const w = window.getFieldset();
  const free = CRYSTAL_SYSTEMS.includes(system as CrystalSystem) ? freeCellParameters(system as CrystalSystem) : [];
  return (
    <fieldset className="space-y-2 border-t border-ink-100 pt-3">
      <legend className="text-sm font-semibold text-ink-700">Acceptance window</legend>
      <p className="text-xs text-ink-500">
        Optional. How far the main phase's refined cell may lie from the declared one: give ± an amount or a percentage for any parameter you care about; the
        parameters the crystal system fixes take none. A refined value exactly on a limit counts as inside.
      </p>
      {free.length === 0 ? (
        <p className="text-xs text-ink-600">Choose the main phase's crystal system to set a window.</p>
      ) : (
        <div className="grid gap-3 sm:grid-cols-3">
          {free.map((key) => {
            const entry = w[key].getFieldset();
            const angle = key === "alpha" || key === "beta" || key === "gamma";
            return (
              <div key={key}>
                <label htmlFor={entry.plusMinus.id} className="text-xs text-ink-600">
                  <CellSymbol name={key} /> ±
                </label>
                <div className="flex gap-2">
                  <input className="input" inputMode="decimal" placeholder="no limit" {...getInputProps(entry.plusMinus, { type: "text" })} />
                  <select className="input w-20" aria-label={`Unit of the window on ${CELL_PARAMETER_LABELS[key]}`} {...getSelectProps(entry.unit)}>
                    <option value="absolute">{angle ? "°" : "Å"}</option>
                    <option value="percent">%</option>
                  </select>
                </div>
                <FieldErrors id={`${entry.plusMinus.id}-error`} errors={[...(entry.plusMinus.errors ?? []), ...(entry.unit.errors ?? [])]} />
              </div>
            );
          })}
        </div>
      )}
      <FieldErrors id={`${window.id}-error`} errors={window.errors} />
    </fieldset>
  );
}
