// An order's delivered files as a table (versions, size, SHA-256, uploader, check), with the check status kept live.
import { useQuery } from "@tanstack/react-query";
import type { ReactNode } from "react";
import { FILE_KIND_LABELS, formatBytes, type FileKind } from "~/models/files";
import { Badge, TableCard } from "./ui";

export interface FileCheck {
  id?: string | null;
  status: "queued" | "running" | "done" | "failed" | null;
  verdict: string | null;
  error?: string | null;
}

export interface FileRow {
  id: string;
  name: string;
  version: number;
  kind: FileKind;
  size: number;
  sha256: string;
  state: "uploading" | "stored" | "rejected";
  rejectReason?: string | null;
  sampleId?: string | null;
  sampleLabel: string | null;
  uploader: string | null;
  uploadedAt: string;
  deletedAt?: string | null;
  check: FileCheck | null;
}

const PENDING = new Set(["queued", "running"]);

/**
 * Keeps the checks of the rows current: while any check is queued or running, asks the files API every two
 * seconds and takes each file's check from its answer (the rows themselves come from the page's loader).
 */
export function useLiveChecks<T extends FileRow>(orderId: string, rows: T[], enabled = true): T[] {
  const pending = rows.some((r) => r.check?.status && PENDING.has(r.check.status));
  const query = useQuery({
    queryKey: ["order-file-checks", orderId],
    enabled,
    queryFn: async () => {
      const res = await fetch(`/api/orders/${orderId}/files`, { headers: { Accept: "application/json" } });
      if (!res.ok) throw new Error(`The file list answered ${res.status}.`);
      return ((await res.json()) as { files: { id: string; check: FileCheck }[] }).files;
    },
    refetchInterval: (q) => {
      const latest = q.state.data;
      const stillPending = latest ? latest.some((f) => f.check.status && PENDING.has(f.check.status)) : pending;
      return stillPending || pending ? 2000 : false;
    },
    staleTime: 0,
  });
  const fresh = new Map((query.data ?? []).map((f) => [f.id, f.check]));
  return rows.map((r) => {
    const check = fresh.get(r.id);
    return check?.status ? { ...r, check: { ...r.check, ...check } } : r;
  });
}

const VERDICT_TONES: Record<string, Parameters<typeof Badge>[0]["tone"]> = { consistent: "ok", review: "caution", inconsistent: "danger" };

/** The check of one file in words: queued, running, the verdict, or that the engine could not read it. */
export function CheckStatus({ check, kind }: { check: FileCheck | null; kind: FileKind }) {
  if (kind !== "scan") return <span className="text-xs text-ink-500">not a scan</span>;
  if (!check?.status) return <span className="text-xs text-ink-500">no check</span>;
  if (check.status === "queued") return <Badge tone="neutral">Check queued</Badge>;
  if (check.status === "running") return <Badge tone="brand">Check running</Badge>;
  if (check.status === "failed") {
    return (
      <span>
        <Badge tone="danger">Could not be read</Badge>
        {check.error ? <span className="mt-1 block max-w-xs text-xs text-danger-700">{check.error}</span> : null}
      </span>
    );
  }
  return <Badge tone={VERDICT_TONES[check.verdict ?? ""] ?? "neutral"}>{check.verdict ? `Check: ${check.verdict}` : "Check done"}</Badge>;
}

function StateBadge({ row }: { row: FileRow }) {
  if (row.deletedAt) return <Badge tone="neutral">Deleted by the client</Badge>;
  if (row.state === "uploading") return <Badge tone="caution">Uploading</Badge>;
  if (row.state === "rejected") return <Badge tone="danger">Refused</Badge>;
  return <Badge tone="ok">Stored</Badge>;
}

/** The files table; `actions` renders the last column (download, delete, replace) for a row. */
export function OrderFilesTable({
  rows,
  caption,
  showState = false,
  actions,
}: {
  rows: FileRow[];
  caption: string;
  showState?: boolean;
  actions?: (row: FileRow) => ReactNode;
}) {
  const columns = ["File", "Sample", "Size", "SHA-256", "Uploaded", ...(showState ? ["State"] : []), "Check", ...(actions ? [""] : [])];
  return (
    <TableCard columns={columns} caption={caption}>
      {rows.map((row) => (
        <tr key={row.id} data-file-row={`${row.name} v${row.version}`}>
          <td>
            <span className="font-medium text-ink-900">{row.name}</span> <span className="font-mono text-xs text-ink-500">v{row.version}</span>
            <span className="block text-xs text-ink-500">{FILE_KIND_LABELS[row.kind]}</span>
          </td>
          <td className="text-sm">{row.sampleLabel ?? "—"}</td>
          <td className="whitespace-nowrap text-sm">{formatBytes(row.size)}</td>
          <td>
            <code className="block max-w-[11rem] truncate font-mono text-xs text-ink-600" title={row.sha256}>
              {row.sha256 || "—"}
            </code>
          </td>
          <td className="text-xs text-ink-600">
            {row.uploader ?? "—"}
            <span className="block">{new Date(row.uploadedAt).toLocaleString()}</span>
          </td>
          {showState ? (
            <td>
              <StateBadge row={row} />
              {row.state === "rejected" && row.rejectReason ? <span className="mt-1 block max-w-xs text-xs text-danger-700">{row.rejectReason}</span> : null}
            </td>
          ) : null}
          <td>
            <CheckStatus check={row.check} kind={row.kind} />
          </td>
          {actions ? <td className="whitespace-nowrap text-right">{actions(row)}</td> : null}
        </tr>
      ))}
    </TableCard>
  );
}
