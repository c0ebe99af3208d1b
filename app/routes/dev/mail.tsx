// /dev/mail — what the local e-mail fake received, for development; not served in production.
import { data } from "react-router";
import { EmptyState, PageHeader } from "~/components/ui";
import { config } from "~/config.server";
import { notFound, requireAdmin, requireUser } from "~/utils/permissions.server";
import type { Route } from "./+types/mail";
import { useFormat } from "~/components/locale";

interface FakeMessage {
  id: string;
  receivedAt: string;
  to: string[];
  subject: string;
  text?: string;
}

export async function loader({ request }: Route.LoaderArgs) {
  if (config.isProduction) notFound();
  const actor = await requireUser(request);
  if (!actor.user.isAdmin) notFound();
  // Reset links pass through here: an admin needs the second factor, as on every admin screen.
  await requireAdmin(request);
  try {
    const res = await fetch(new URL("/_fake/messages", config.mail.baseUrl), { signal: AbortSignal.timeout(3000) });
    if (!res.ok) throw new Error(`status ${res.status}`);
    const body = (await res.json()) as { messages: FakeMessage[]; sendAttempts: number };
    return { messages: body.messages.slice(-200).reverse(), sendAttempts: body.sendAttempts, problem: null };
  } catch (err) {
    return data({
      messages: [] as FakeMessage[],
      sendAttempts: 0,
      problem: `The e-mail fake at ${config.mail.baseUrl} did not answer (${(err as Error).message}).`,
    });
  }
}

export default function DevMail({ loaderData }: Route.ComponentProps) {
  const fmt = useFormat();
  const { messages, sendAttempts, problem } = loaderData;
  return (
    <main id="main" className="mx-auto w-full max-w-4xl px-4 py-8 sm:px-6">
      <PageHeader
        title="Sent e-mail (development)"
        subtitle={problem ?? `${messages.length} messages received by the local e-mail fake, ${sendAttempts} send attempts.`}
      />
      {messages.length === 0 ? (
        <EmptyState title="No e-mail yet">Messages appear here once the worker has sent them.</EmptyState>
      ) : (
        <ul className="space-y-3">
          {messages.map((m) => (
            <li key={m.id} className="card">
              <details>
                <summary className="cursor-pointer">
                  <span className="font-medium">{m.subject}</span>
                  <span className="block text-xs text-ink-500">
                    to {m.to.join(", ")} · {fmt.dateTime(m.receivedAt)}
                  </span>
                </summary>
                <pre className="mt-3 text-xs whitespace-pre-wrap text-ink-700">{m.text ?? "(no plain-text part)"}</pre>
              </details>
            </li>
          ))}
        </ul>
      )}
    </main>
  );
}

export function meta(_: Route.MetaArgs) {
  return [{ title: "Sent e-mail — Diffractory" }, { name: "description", content: "What the local e-mail stand-in received, for development." }];
}
