// /admin/outbox — e-mails that could not be delivered after every retry, with the error and a retry.
import { data, Form, Link, useNavigation } from "react-router";
import { z } from "zod";
import { Badge, EmptyState, FormError, PageHeader, TableCard } from "~/components/ui";
import { outboxForAdmins } from "~/models/notifications/outbox-admin.server";
import { retryParkedMessage } from "~/models/notifications/delivery.server";
import { requireAdmin } from "~/utils/permissions.server";
import { redirectWithToast } from "~/utils/toast.server";
import { readForm } from "~/utils/form.server";
import type { Route } from "./+types/outbox";
import { useFormat } from "~/components/locale";

const STATUSES = ["parked", "queued", "sent", "all"] as const;

export async function loader({ request }: Route.LoaderArgs) {
  await requireAdmin(request);
  const asked = new URL(request.url).searchParams.get("status") ?? "parked";
  const status = (STATUSES as readonly string[]).includes(asked) ? (asked as (typeof STATUSES)[number]) : "parked";
  const { rows, counts } = await outboxForAdmins(status);
  return { status, counts, rows: rows.map((r) => ({ ...r, createdAt: r.createdAt.toISOString(), sentAt: r.sentAt?.toISOString() ?? null })) };
}

const Retry = z.object({ intent: z.literal("retry"), id: z.uuid() });

export async function action({ request }: Route.ActionArgs) {
  await requireAdmin(request);
  const parsed = Retry.safeParse(Object.fromEntries(await readForm(request)));
  if (!parsed.success) return data({ error: "Choose a parked message to retry." }, { status: 400 });
  if (!(await retryParkedMessage(parsed.data.id))) return data({ error: "That message is not parked any more." }, { status: 409 });
  return redirectWithToast("/admin/outbox", { kind: "success", message: "The message is back in the queue." });
}

const TONES = { parked: "danger", queued: "caution", sent: "ok" } as const;

export default function Outbox({ loaderData, actionData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { status, counts, rows } = loaderData;
  const busy = useNavigation().state !== "idle";
  return (
    <div>
      <PageHeader title="Outbox" subtitle="Every milestone e-mail passes through here. Parked messages failed on every retry and wait for you." />
      <nav aria-label="Outbox filter" className="mb-4 flex gap-2 text-sm">
        {STATUSES.map((s) => (
          <Link
            key={s}
            to={`/admin/outbox?status=${s}`}
            className={`rounded-md px-3 py-1 ${s === status ? "bg-beam-50 font-medium text-beam-700" : "text-ink-700 hover:bg-ink-100"}`}
            aria-current={s === status ? "page" : undefined}
          >
            {s === "all" ? "All" : `${s[0].toUpperCase()}${s.slice(1)} (${counts[s] ?? 0})`}
          </Link>
        ))}
      </nav>
      <div className="h-6">
        <FormError errors={actionData?.error ? [actionData.error] : undefined} />
      </div>
      {rows.length === 0 ? (
        <EmptyState title={status === "parked" ? "Nothing parked" : "No messages"}>
          {status === "parked" ? "Every message was delivered or is still being retried." : "No message has this status."}
        </EmptyState>
      ) : (
        <TableCard columns={["Written", "To", "Subject", "Status", "Attempts", "Last error", ""]}>
          {rows.map((m) => (
            <tr key={m.id}>
              <td className="text-xs whitespace-nowrap">{fmt.dateTime(m.createdAt)}</td>
              <td className="text-sm">{m.to}</td>
              <td className="text-sm">{m.subject}</td>
              <td>
                <Badge tone={TONES[m.status]}>{m.status}</Badge>
              </td>
              <td className="text-right">{m.attempts}</td>
              <td className="max-w-64 text-xs break-words text-ink-600">{m.lastError ?? "—"}</td>
              <td>
                {m.status === "parked" ? (
                  <Form method="post">
                    <input type="hidden" name="intent" value="retry" />
                    <input type="hidden" name="id" value={m.id} />
                    <button type="submit" className="btn-secondary py-1" disabled={busy} aria-label={`Retry the message to ${m.to}`}>
                      Retry
                    </button>
                  </Form>
                ) : null}
              </td>
            </tr>
          ))}
        </TableCard>
      )}
    </div>
  );
}

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Outbox — Diffractory" },
    { name: "description", content: "E-mails that could not be delivered after every retry, with the error and a way to send them again." },
  ];
}
