// The bell in the workspace header: the unread count and latest notifications of the organisation the person works
// in, read through TanStack Query; other organisations' unread notices are counted, with a switch to each.
import { Formula } from "~/components/symbols";
import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useEffect, useRef, useState } from "react";
import { Form, Link } from "react-router";
import { useFormat } from "~/components/locale";

interface NotificationsJson {
  unread: number;
  items: { id: string; kind: string; orderId: string | null; title: string; href: string; createdAt: string; read: boolean }[];
  /** Unread notices of the person's other organisations. */
  elsewhere: { organisationId: string; name: string; unread: number }[];
}

const KEY = ["notifications"];

async function fetchNotifications(): Promise<NotificationsJson> {
  const res = await fetch("/api/notifications", { headers: { accept: "application/json" } });
  if (!res.ok) throw new Error(`Notifications could not be loaded (${res.status}).`);
  return res.json();
}

export function NotificationBell() {
  const fmt = useFormat();
  const client = useQueryClient();
  const [open, setOpen] = useState(false);
  const box = useRef<HTMLDivElement>(null);
  const { data, isPending, isError, refetch } = useQuery({ queryKey: KEY, queryFn: fetchNotifications, refetchInterval: 60_000 });
  const markRead = useMutation({
    mutationFn: async (body: { all: true } | { ids: string[] }) => {
      const res = await fetch("/api/notifications", { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify(body) });
      if (!res.ok) throw new Error("Could not mark read.");
    },
    onSettled: () => client.invalidateQueries({ queryKey: KEY }),
  });
  useEffect(() => {
    if (!open) return;
    const close = (e: MouseEvent) => {
      if (box.current && !box.current.contains(e.target as Node)) setOpen(false);
    };
    document.addEventListener("mousedown", close);
    return () => document.removeEventListener("mousedown", close);
  }, [open]);
  const unread = data?.unread ?? 0;
  const elsewhere = data?.elsewhere ?? [];
  const unreadElsewhere = elsewhere.reduce((n, o) => n + o.unread, 0);
  return (
    <div className="relative" ref={box}>
      <button
        type="button"
        className="relative rounded-md px-2 py-1 text-sm text-ink-700 hover:bg-ink-100"
        aria-expanded={open}
        aria-label={`Notifications${unread ? `, ${unread} unread` : ""}${unreadElsewhere ? `, ${unreadElsewhere} unread in your other organisations` : ""}`}
        onClick={() => setOpen((o) => !o)}
      >
        <svg aria-hidden="true" viewBox="0 0 20 20" className="inline h-5 w-5" fill="currentColor">
          <path d="M10 2a5 5 0 0 0-5 5v3.2L3.3 13a.8.8 0 0 0 .7 1.2h12a.8.8 0 0 0 .7-1.2L15 10.2V7a5 5 0 0 0-5-5Zm-2 13.5a2 2 0 0 0 4 0H8Z" />
        </svg>
        {unread > 0 ? (
          <span
            data-testid="unread-count"
            className="absolute -top-1 -right-1 min-w-5 rounded-full bg-beam-600 px-1 text-center text-xs font-semibold text-white"
          >
            {unread > 99 ? "99+" : unread}
          </span>
        ) : unreadElsewhere > 0 ? (
          <span
            data-testid="unread-elsewhere-dot"
            aria-hidden="true"
            className="absolute -top-0.5 -right-0.5 h-2.5 w-2.5 rounded-full border border-white bg-ink-400"
          />
        ) : null}
      </button>
      {open ? (
        <div className="absolute right-0 z-20 mt-2 w-80 rounded-md border border-ink-200 bg-white shadow-lg">
          <div className="flex items-center justify-between border-b border-ink-100 px-3 py-2">
            <span className="text-sm font-semibold">Notifications</span>
            <button
              type="button"
              className="text-xs text-beam-700 hover:underline disabled:text-ink-400"
              disabled={unread === 0 || markRead.isPending}
              onClick={() => markRead.mutate({ all: true })}
            >
              {markRead.isPending ? "Marking read…" : "Mark all read"}
            </button>
          </div>
          {markRead.isError ? (
            <p role="alert" className="border-b border-ink-100 px-3 py-2 text-xs text-danger-700">
              Could not mark them read; try again.
            </p>
          ) : null}
          {elsewhere.length ? (
            <ul className="border-b border-ink-100 bg-ink-50" data-testid="unread-elsewhere">
              {elsewhere.map((o) => (
                <li key={o.organisationId} className="flex items-center justify-between gap-2 px-3 py-2 text-xs text-ink-700">
                  <span>
                    {o.unread} unread in <span className="font-medium">{o.name}</span>
                  </span>
                  {/* A full page load: the whole workspace (and this bell) changes organisation. */}
                  <Form method="post" action="/switch-organisation" reloadDocument>
                    <input type="hidden" name="organisationId" value={o.organisationId} />
                    <button type="submit" className="text-beam-700 hover:underline">
                      Switch to {o.name}
                    </button>
                  </Form>
                </li>
              ))}
            </ul>
          ) : null}
          <ul className="max-h-96 overflow-y-auto" aria-busy={isPending}>
            {isPending ? (
              <li className="px-3 py-4 text-sm text-ink-500" role="status">
                Loading notifications…
              </li>
            ) : isError ? (
              <li className="px-3 py-4 text-sm text-danger-700" role="alert">
                Notifications could not be loaded.{" "}
                <button type="button" className="text-beam-700 underline" onClick={() => void refetch()}>
                  Try again
                </button>
              </li>
            ) : (data?.items ?? []).length === 0 ? (
              <li className="px-3 py-4 text-sm text-ink-500">Nothing yet. Orders, quotes and checks you follow will be announced here.</li>
            ) : null}
            {(data?.items ?? []).map((n) => (
              <li key={n.id} className={`border-b border-ink-100 last:border-0 ${n.read ? "" : "bg-beam-50"}`}>
                <Link
                  to={n.href || "/account/notifications"}
                  className="block px-3 py-2 text-sm hover:bg-ink-50"
                  onClick={() => {
                    if (!n.read) markRead.mutate({ ids: [n.id] });
                    setOpen(false);
                  }}
                >
                  {n.read ? null : (
                    <span className="mr-1 inline-flex items-center gap-1 text-xs font-semibold text-beam-700">
                      <svg viewBox="0 0 8 8" className="h-2 w-2" aria-hidden="true" focusable="false">
                        <circle cx="4" cy="4" r="4" fill="currentColor" />
                      </svg>
                      New
                    </span>
                  )}
                  <span className={n.read ? "text-ink-700" : "font-medium text-ink-900"}>
                    <Formula>{n.title}</Formula>
                  </span>
                  <span className="block text-xs text-ink-500">{fmt.dateTime(n.createdAt)}</span>
                </Link>
              </li>
            ))}
          </ul>
          <Link
            to="/account/notifications"
            className="block border-t border-ink-100 px-3 py-2 text-xs text-beam-700 hover:underline"
            onClick={() => setOpen(false)}
          >
            E-mail settings
          </Link>
        </div>
      ) : null}
    </div>
  );
}
