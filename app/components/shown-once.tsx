// Pieces of the screens that hand out secrets: the one-time display of a new token or link, and its revoke button.
import { Form } from "react-router";

/** A new secret (API token, share link) shown this once, selectable for copying. */
export function ShownOnce({ title, label, value, note }: { title: string; label: string; value: string; note?: string }) {
  return (
    <div className="rounded-lg border border-ok-600/30 bg-ok-50 p-4 text-sm" role="status">
      <p className="font-semibold text-ok-700">{title} — copy it now, it is shown only once.</p>
      <input readOnly aria-label={label} className="input mt-2 font-mono text-xs" value={value} onFocus={(e) => e.currentTarget.select()} />
      {note ? <p className="mt-1 text-xs text-ink-600">{note}</p> : null}
    </div>
  );
}

/** A one-button form posting `intent=revoke` with the record's id under `field`. */
export function RevokeButton({ field, id, label, busy }: { field: string; id: string; label: string; busy: boolean }) {
  return (
    <Form method="post">
      <input type="hidden" name="intent" value="revoke" />
      <input type="hidden" name={field} value={id} />
      <button type="submit" className="btn-secondary" disabled={busy} aria-label={label}>
        Revoke
      </button>
    </Form>
  );
}
