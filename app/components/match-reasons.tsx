// Why a lab fits a request or not: each reason with a mark and a word, and warnings (fluorescence) below.
export function MatchReasons({ reasons, warnings }: { reasons: { ok: boolean; text: string }[]; warnings: string[] }) {
  return (
    <div className="mt-3 text-sm">
      <ul className="space-y-0.5">
        {reasons.map((r) => (
          <li key={r.text} className={r.ok ? "text-ink-700" : "text-danger-700"}>
            <span aria-hidden="true">{r.ok ? "✓ " : "✕ "}</span>
            <span className="sr-only">{r.ok ? "Fits: " : "Does not fit: "}</span>
            {r.text}
          </li>
        ))}
      </ul>
      {warnings.length ? (
        <ul className="mt-2 space-y-0.5 rounded-lg bg-caution-50 p-2 text-caution-700" aria-label="Warnings">
          {warnings.map((w) => (
            <li key={w}>
              <span aria-hidden="true">! </span>
              {w}
            </li>
          ))}
        </ul>
      ) : null}
    </div>
  );
}
