// Shows the one-time message a redirect carried, and lets the person dismiss it.
import { useEffect, useState } from "react";
import { useLocation } from "react-router";
import type { Toast } from "~/utils/toast.server";

export function ToastMessage({ toast }: { toast: Toast }) {
  const [open, setOpen] = useState(true);
  // biome-ignore lint/correctness/useExhaustiveDependencies: a new toast object reopens the message
  useEffect(() => setOpen(true), [toast]);
  if (!open) return null;
  const tone = toast.kind === "error" ? "border-danger-600 text-danger-700" : "border-beam-500 text-ink-800";
  return (
    <div role="status" className={`fixed right-4 bottom-4 z-50 flex max-w-sm items-start gap-3 rounded-lg border-l-4 bg-white p-4 text-sm shadow-lg ${tone}`}>
      <p className="flex-1">{toast.message}</p>
      <button type="button" className="text-ink-500 hover:text-ink-800" onClick={() => setOpen(false)} aria-label="Dismiss message">
        ×
      </button>
    </div>
  );
}

/**
 * The toast to show: the one the latest load carried, kept through a revalidation of the same page (a thread
 * that reloads its data once it is read, say), whose load finds the one-time cookie already spent; a navigation
 * to another page lets it go.
 */
export function useKeptToast(latest: Toast | null | undefined): Toast | null {
  const { key } = useLocation();
  const [kept, setKept] = useState<{ key: string; toast: Toast } | null>(null);
  useEffect(() => {
    if (latest) setKept({ key, toast: latest });
  }, [latest, key]);
  return latest ?? (kept?.key === key ? kept.toast : null);
}
