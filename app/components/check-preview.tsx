// The lattice check of a scan file in the browser before it is uploaded: the engine runs in a Web Worker.
import { useEffect, useMemo, useState } from "react";
import type { LatticeCheckResult, Radiation } from "~/diffraction";
import type { CheckWorkerRequest, CheckWorkerResponse } from "~/diffraction/check-worker";
import type { Verdict } from "~/diffraction/verdict";
import { cellRows, declaredCheckOptions, foreignMarks, type SampleDeclaration, VERDICT_WORDS } from "~/domain/check-result";
import { CheckPlot, type CheckPlotData } from "./check-plot";
import { CheckStateBadge } from "./check-status";
import { Badge } from "./ui";
import { useFormat } from "~/components/locale";
import { chooseRadiation, sameSource } from "~/domain/measurement";
import type { SampleHolder } from "~/diffraction/holders";
import type { InstrumentProfile } from "~/diffraction/scherrer";
import { RadiationMismatch } from "./measurement-conditions";

/** Larger files are checked on the server after the upload only. */
export const PREVIEW_MAX_BYTES = 50 * 1024 * 1024;

type PreviewState = { kind: "reading" } | { kind: "checking" } | { kind: "done"; result: LatticeCheckResult; ms: number } | { kind: "failed"; error: string };

let nextId = 1;

/** Runs the check of a file's bytes in a fresh worker (the buffer is handed over); resolves with the engine's answer. */
export function checkInWorker(
  bytes: ArrayBuffer,
  options: CheckWorkerRequest["options"],
  signal?: AbortSignal,
  fileName?: string,
): Promise<CheckWorkerResponse> {
  return new Promise((resolve, reject) => {
    const worker = new Worker(new URL("../diffraction/check-worker.ts", import.meta.url), { type: "module" });
    const id = nextId++;
    const stop = () => worker.terminate();
    signal?.addEventListener("abort", () => {
      stop();
      reject(new DOMException("The preview was cancelled.", "AbortError"));
    });
    worker.onmessage = (e: MessageEvent<CheckWorkerResponse>) => {
      if (e.data.id !== id) return;
      stop();
      resolve(e.data);
    };
    worker.onerror = (e) => {
      stop();
      resolve({ id, ok: false, error: `The browser could not run the check (${e.message || "worker error"}); it runs on the server after the upload.` });
    };
    worker.postMessage({ id, bytes, fileName, options } satisfies CheckWorkerRequest, [bytes]);
  });
}

/** The quote's instrument as the preview checks with it, like the server: its source, name, holder and profile. */
export interface PreviewInstrument {
  radiation: Radiation | null;
  name: string | null;
  holder?: SampleHolder;
  instrumentProfile?: InstrumentProfile;
}

export function CheckPreview({ file, sample, instrument }: { file: File; sample: SampleDeclaration; instrument: PreviewInstrument }) {
  const [state, setState] = useState<PreviewState>({ kind: "reading" });
  const [mismatch, setMismatch] = useState<string | null>(null);
  // biome-ignore lint/correctness/useExhaustiveDependencies: keyed on the declared values, not the object identity, so a re-render with an equal sample does not re-run the check
  const declared = useMemo(() => declaredCheckOptions(sample), [JSON.stringify(sample)]);
  const instrumentKey = JSON.stringify(instrument);

  // biome-ignore lint/correctness/useExhaustiveDependencies: the instrument is compared by value through instrumentKey
  useEffect(() => {
    const abort = new AbortController();
    (async () => {
      if (file.size > PREVIEW_MAX_BYTES) {
        setState({ kind: "failed", error: "The file is too large to preview in the browser; it is checked on the server after the upload." });
        return;
      }
      setState({ kind: "reading" });
      setMismatch(null);
      const options = { ...declared, holder: instrument.holder, instrumentProfile: instrument.instrumentProfile };
      // As on the server (chooseRadiation): the instrument's source first; a file stating another is checked again with its own.
      const first = chooseRadiation(undefined, instrument.radiation, instrument.name).radiation;
      if (abort.signal.aborted) return;
      setState({ kind: "checking" });
      const started = performance.now();
      let answer = await checkInWorker(await file.arrayBuffer(), { radiation: first, ...options }, abort.signal, file.name);
      if (abort.signal.aborted) return;
      if (answer.ok) {
        const choice = chooseRadiation(answer.result.metadata, instrument.radiation, instrument.name);
        setMismatch(choice.mismatch);
        if (!sameSource(choice.radiation, first))
          answer = await checkInWorker(await file.arrayBuffer(), { radiation: choice.radiation, ...options }, abort.signal, file.name);
        if (abort.signal.aborted) return;
      }
      setState(answer.ok ? { kind: "done", result: answer.result, ms: performance.now() - started } : { kind: "failed", error: answer.error });
    })().catch((err) => {
      if ((err as Error).name !== "AbortError") setState({ kind: "failed", error: String((err as Error).message ?? err) });
    });
    return () => abort.abort();
  }, [file, declared, instrumentKey]);

  return (
    <section className="space-y-3 rounded-lg border border-ink-200 bg-ink-50 p-4" aria-label={`Preview check of ${file.name}`} data-testid="check-preview">
      <div className="flex flex-wrap items-center gap-2">
        <h3 className="text-sm font-semibold">Preview check</h3>
        <span role="status" aria-live="polite">
          {state.kind === "reading" || state.kind === "checking" ? (
            <CheckStateBadge status="running" verdict={null} />
          ) : state.kind === "failed" ? (
            <Badge tone="danger">Cannot check</Badge>
          ) : (
            <CheckStateBadge status="done" verdict={state.result.verdict} />
          )}
        </span>
        <span className="text-xs text-ink-600">In your browser; the server checks the stored file again after the upload.</span>
      </div>
      {state.kind === "failed" ? <p className="text-sm text-danger-700">{state.error}</p> : null}
      <RadiationMismatch sentence={mismatch} />
      {state.kind === "done" ? <PreviewResult result={state.result} ms={state.ms} /> : null}
    </section>
  );
}

function PreviewResult({ result, ms }: { result: LatticeCheckResult; ms: number }) {
  const fmt = useFormat();
  const plot: CheckPlotData = useMemo(
    () => ({
      twoTheta: result.twoTheta,
      observed: result.observed,
      background: result.background,
      fitted: result.fittedProfile,
      ticks: result.reflections.map((t) => ({ twoTheta: t.twoTheta, label: `${t.h} ${t.k} ${t.l}` })),
      marks: foreignMarks(result.peaks),
    }),
    [result],
  );
  const rows = cellRows(result).filter((r) => r.refined !== "not refined");
  return (
    <div className="space-y-3">
      <p className="text-sm text-ink-800">{VERDICT_WORDS[result.verdict as Verdict]?.meaning}</p>
      <ul className="list-disc pl-5 text-xs text-ink-700">
        {result.reasons.slice(0, 4).map((r) => (
          <li key={r}>{r}</li>
        ))}
      </ul>
      {rows.length ? (
        <table className="table text-xs">
          <caption className="sr-only">Declared and refined cell</caption>
          <thead>
            <tr>
              <th scope="col"></th>
              <th scope="col">Declared</th>
              <th scope="col">Refined ± s.u.</th>
              <th scope="col">Deviation</th>
            </tr>
          </thead>
          <tbody>
            {rows.map((r) => (
              <tr key={r.name}>
                <th scope="row">{r.name}</th>
                <td className="tabular-nums">{r.declared}</td>
                <td className="tabular-nums">{r.refined}</td>
                <td className="tabular-nums">{r.deviation}</td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : null}
      <p className="text-xs text-ink-600">
        M20 {result.figuresOfMerit.M20?.toFixed(1) ?? "—"} · F_N {result.figuresOfMerit.FN?.toFixed(1) ?? "—"} · {result.peaks.length} peaks ·{" "}
        {fmt.number(result.twoTheta.length)} points · {(ms / 1000).toFixed(2)} s
      </p>
      <CheckPlot data={plot} height={220} label={`Preview pattern`} />
    </div>
  );
}
