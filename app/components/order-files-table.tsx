// An order's delivered files as a table: versions, size, SHA-256, uploader, state and the live lattice check.
import type { ReactNode } from "react";
import { CheckStateBadge, CheckStatusBadge, WindowBadge } from "./check-status";
import { FILE_KIND_LABELS, formatBytes, type FileKind } from "~/domain/order-files";
import { Badge, TableCard } from "./ui";
import { useFormat } from "~/components/locale";
import { EnteredConditions, MeasurementFoldout, RadiationMismatch, type MeasurementInfo } from "./measurement-conditions";
import type { MeasurementConditions } from "~/domain/measurement";

export interface FileCheck {
  id: string;
  fileId: string;
  status: "queued" | "running" | "done" | "failed";
  verdict: string | null;
  /** The acceptance window's answer (null: none set; absent before windows). */
  withinWindow?: boolean | null;
  error: string | null;
  finishedAt: string | null;
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
  /** Archived from the client's view (shown under "Show archived"). */
  archivedAt?: string | null;
  check: FileCheck | null;
  /** A read scan: its format and what it states (absent for other kinds and scans stored before reading). */
  scanFormat?: string | null;
  scanInfo?: MeasurementInfo | null;
  /** The sentence when the scan's radiation differs from the quote's instrument. */
  radiationMismatch?: string | null;
  /** What the lab entered about the measurement beside what the file states. */
  conditions?: MeasurementConditions | null;
}

/**
 * The check of one file: for signed-in people a live badge (asked again while queued or running, linking to
 * the check screen); for a share link's visitor the state as it was when the page loaded.
 */
export function FileCheckCell({ check, kind, live }: { check: FileCheck | null; kind: FileKind; live: boolean }) {
  if (kind !== "scan") return <span className="text-xs text-ink-500">not a scan</span>;
  if (!check) return <span className="text-xs text-ink-500">no check</span>;
  if (live) return <CheckStatusBadge checkId={check.id} initial={check} />;
  return (
    <span className="inline-flex flex-wrap items-center gap-2">
      <CheckStateBadge status={check.status} verdict={check.verdict} />
      {check.status === "done" ? <WindowBadge withinWindow={check.withinWindow} /> : null}
      {check.status === "failed" && check.error ? <span className="text-xs text-danger-700">{check.error}</span> : null}
    </span>
  );
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
  live = true,
  actions,
}: {
  rows: FileRow[];
  caption: string;
  showState?: boolean;
  /** Live check badges need a signed-in person (the status API); share-link pages pass false. */
  live?: boolean;
  actions?: (row: FileRow) => ReactNode;
}) {
  const fmt = useFormat();
  const columns = ["File", "Sample", "Size", "SHA-256", "Uploaded", ...(showState ? ["State"] : []), "Check", ...(actions ? [""] : [])];
  return (
    <TableCard columns={columns} caption={caption}>
      {rows.map((row) => (
        <tr key={row.id} data-file-row={`${row.name} v${row.version}`}>
          <td>
            <span className="font-medium text-ink-900">{row.name}</span> <span className="font-mono text-xs text-ink-500">v{row.version}</span>
            <span className="block text-xs text-ink-500">{FILE_KIND_LABELS[row.kind]}</span>
            {row.kind === "scan" && row.scanInfo ? <MeasurementFoldout info={row.scanInfo} name={`${row.name} v${row.version}`} /> : null}
            {row.kind === "scan" ? <EnteredConditions conditions={row.conditions} name={`${row.name} v${row.version}`} /> : null}
            {row.kind === "scan" && !row.deletedAt ? <RadiationMismatch sentence={row.radiationMismatch} /> : null}
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
            <span className="block">{fmt.dateTime(row.uploadedAt)}</span>
          </td>
          {showState ? (
            <td>
              <StateBadge row={row} />
              {row.state === "rejected" && row.rejectReason ? <span className="mt-1 block max-w-xs text-xs text-danger-700">{row.rejectReason}</span> : null}
            </td>
          ) : null}
          <td>
            <FileCheckCell check={row.check} kind={row.kind} live={live} />
          </td>
          {actions ? <td className="whitespace-nowrap text-right">{actions(row)}</td> : null}
        </tr>
      ))}
    </TableCard>
  );
}
