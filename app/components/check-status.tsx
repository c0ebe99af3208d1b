// A lattice check's live status: a polling hook on /api/checks/:id and a badge for file lists.
import { useQuery } from "@tanstack/react-query";
import { Link } from "react-router";
import type { Verdict } from "~/diffraction/verdict";
import { VERDICT_WORDS } from "~/domain/check-result";
import { Badge } from "./ui";

export type CheckStatusValue = "queued" | "running" | "done" | "failed";

/** What GET /api/checks/:id answers. */
export interface CheckStatusJson {
  id: string;
  fileId: string;
  status: CheckStatusValue;
  verdict: string | null;
  /** The acceptance window's answer, kept apart from the verdict: null when none was set (absent in older answers). */
  withinWindow?: boolean | null;
  error: string | null;
  finishedAt: string | null;
}

/** How often the status is asked again while the check is queued or running. */
export const CHECK_POLL_MS = 1000;

const isOpen = (s: CheckStatusValue | undefined) => s === "queued" || s === "running";

/** The check's status, asked again every second while it is queued or running; stops when done or failed. */
export function useCheckStatus(checkId: string, initial?: CheckStatusJson) {
  return useQuery<CheckStatusJson>({
    queryKey: ["scan-check", checkId],
    queryFn: async ({ signal }) => {
      const res = await fetch(`/api/checks/${encodeURIComponent(checkId)}`, { signal, headers: { Accept: "application/json" } });
      if (!res.ok) throw new Error(res.status === 404 ? "There is no such check." : `The check's status could not be read (${res.status}).`);
      return (await res.json()) as CheckStatusJson;
    },
    initialData: initial,
    // Fresh initial data of a check still in the queue is asked again at once; finished ones never.
    staleTime: (q) => (isOpen(q.state.data?.status) ? 0 : Infinity),
    refetchInterval: (q) => (isOpen(q.state.data?.status) || !q.state.data ? CHECK_POLL_MS : false),
    refetchOnWindowFocus: (q) => isOpen(q.state.data?.status),
    retry: 2,
  });
}

/** A status or verdict as a badge with a word and a shape. */
export function CheckStateBadge({ status, verdict }: { status: CheckStatusValue; verdict: string | null }) {
  if (status === "queued") return <Badge tone="neutral">Check queued</Badge>;
  if (status === "running")
    return (
      <Badge tone="brand">
        {/* The dot pulses, not the word: a fading word would drop below the contrast the badge needs. */}
        <span aria-hidden="true" className="mr-1 inline-block size-1.5 rounded-full bg-current motion-safe:animate-pulse" />
        Checking
      </Badge>
    );
  if (status === "failed") return <Badge tone="danger">Unreadable scan</Badge>;
  const v = VERDICT_WORDS[verdict as Verdict];
  return v ? <Badge tone={v.tone}>{v.label}</Badge> : <Badge tone="neutral">Checked</Badge>;
}

/** The acceptance window's answer beside the verdict; nothing when no window was set. */
export function WindowBadge({ withinWindow }: { withinWindow?: boolean | null }) {
  if (withinWindow === true) return <Badge tone="ok">Within window</Badge>;
  if (withinWindow === false) return <Badge tone="danger">Outside window</Badge>;
  return null;
}

/**
 * On the server a badge shows the status it was given, as the query would (nothing polls there): a query per badge
 * in a throwaway cache cost a list of files more than the rest of its row. In the browser it is the live query.
 */
const useBadgeStatus: (checkId: string, initial?: CheckStatusJson) => { data: CheckStatusJson | undefined; error: Error | null } =
  typeof document === "undefined" ? (_checkId, initial) => ({ data: initial, error: null }) : useCheckStatus;

/**
 * The live status of one check for a file list: polls while the check is queued or running, links to the
 * check screen when it is done, and shows the engine's sentence when the scan could not be read.
 */
export function CheckStatusBadge({ checkId, initial, link = true }: { checkId: string; initial?: CheckStatusJson; link?: boolean }) {
  const { data, error } = useBadgeStatus(checkId, initial);
  if (!data) {
    return (
      <span className="text-xs text-ink-600" role="status">
        {error ? "Check status unavailable" : "Reading check status…"}
      </span>
    );
  }
  const badge = (
    <>
      <CheckStateBadge status={data.status} verdict={data.verdict} />
      {data.status === "done" ? <WindowBadge withinWindow={data.withinWindow} /> : null}
    </>
  );
  return (
    <span className="inline-flex flex-wrap items-center gap-2" role="status" aria-live="polite" data-testid="check-status" data-status={data.status}>
      {link && data.status === "done" ? (
        // The link's name is its visible text ("Consistent Open check"), so speech users can say what they see (WCAG 2.5.3).
        <Link to={`/checks/${data.id}`} className="inline-flex items-center gap-1 underline-offset-2 hover:underline">
          {badge}
          <span className="text-xs font-medium text-beam-700">Open check</span>
        </Link>
      ) : (
        badge
      )}
      {data.status === "failed" && data.error ? <span className="text-xs text-danger-700">{data.error}</span> : null}
    </span>
  );
}
