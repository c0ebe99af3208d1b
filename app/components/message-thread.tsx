// A conversation between a client and a lab: the messages, oldest first, and a box to write the next one with an
// optional attachment uploaded straight to storage. Posts to the thread's API address (docs/design.md#messages);
// the page's loader then shows the new message.
import { useEffect, useRef, useState } from "react";
import { useFetcher, useRevalidator } from "react-router";
import { DirectUpload, type UploadedFile } from "~/components/direct-upload";
import { useFormat } from "~/components/locale";
import { Badge, FormError } from "~/components/ui";

export interface ThreadMessageView {
  id: string;
  body: string;
  at: string | Date;
  authorName: string;
  authorOrganisationName: string;
  side: "client" | "lab";
  attachment: { name: string; sizeBytes: number; url: string } | null;
}

const MAX_LENGTH = 4000;
const size = (bytes: number) => (bytes >= 1024 * 1024 ? `${(bytes / 1024 / 1024).toFixed(1)} MB` : `${Math.max(1, Math.round(bytes / 1024))} kB`);

export function MessageThread({
  id,
  title,
  intro,
  messages,
  yourSide,
  action,
  open,
  closedBecause,
  unread = 0,
}: {
  /** Unique on the page: names the form's fields. */
  id: string;
  title: string;
  intro?: string;
  messages: ThreadMessageView[];
  yourSide: "client" | "lab";
  /** The thread's API address (GET/POST). */
  action: string;
  open: boolean;
  closedBecause?: string | null;
  /** Messages that were unread when the page loaded. */
  unread?: number;
}) {
  const fmt = useFormat();
  const fetcher = useFetcher<{ id?: string; error?: string }>();
  const [attachment, setAttachment] = useState<UploadedFile | null>(null);
  const [uploadKey, setUploadKey] = useState(0);
  const form = useRef<HTMLFormElement>(null);
  const sending = fetcher.state !== "idle";
  const sent = fetcher.state === "idle" && fetcher.data?.id;

  // The page marked the thread read while the layout was counting unread messages in parallel: once shown,
  // reload the data so the navigation's count leaves this thread's messages out.
  const revalidator = useRevalidator();
  const shownUnread = useRef(unread > 0);
  // The "new" badge keeps the count the page opened with, through that reload.
  const [newOnArrival] = useState(unread);
  useEffect(() => {
    if (shownUnread.current) {
      shownUnread.current = false;
      void revalidator.revalidate();
    }
  }, [revalidator]);

  // A message that went through clears the box and the attachment.
  useEffect(() => {
    if (sent) {
      form.current?.reset();
      setAttachment(null);
      setUploadKey((k) => k + 1);
    }
  }, [sent]);

  return (
    <section id="messages" className="card mt-6" aria-label={title}>
      <div className="flex flex-wrap items-center justify-between gap-2">
        <h2 className="text-lg font-semibold">{title}</h2>
        {newOnArrival ? <Badge tone="brand">{newOnArrival} new</Badge> : null}
      </div>
      {intro ? <p className="mt-1 text-sm text-ink-600">{intro}</p> : null}
      {messages.length === 0 ? (
        <p className="mt-3 text-sm text-ink-500">No messages yet.</p>
      ) : (
        <ol className="mt-3 space-y-3" aria-label="Messages">
          {messages.map((m) => {
            const mine = m.side === yourSide;
            return (
              <li key={m.id} className={`max-w-[85%] rounded-lg border p-3 text-sm ${mine ? "ml-auto border-beam-200 bg-beam-50" : "border-ink-200 bg-white"}`}>
                <p className="text-xs text-ink-500">
                  <span className="font-semibold text-ink-700">{m.authorName}</span> · {m.authorOrganisationName} · {fmt.dateTime(m.at)}
                </p>
                <p className="mt-1 whitespace-pre-wrap break-words text-ink-900">{m.body}</p>
                {m.attachment ? (
                  <p className="mt-2 text-xs">
                    <a href={m.attachment.url} className="text-beam-700 hover:underline">
                      📎 {m.attachment.name}
                    </a>{" "}
                    <span className="text-ink-500">({size(m.attachment.sizeBytes)})</span>
                  </p>
                ) : null}
              </li>
            );
          })}
        </ol>
      )}
      {open ? (
        <fetcher.Form ref={form} method="post" action={action} className="mt-4 space-y-2 border-t border-ink-100 pt-4">
          <label htmlFor={`${id}-body`} className="label">
            Your message
          </label>
          <textarea id={`${id}-body`} name="body" className="input" rows={3} maxLength={MAX_LENGTH} required aria-describedby={`${id}-error`} />
          <input type="hidden" name="attachmentKey" value={attachment?.storageKey ?? ""} />
          <input type="hidden" name="attachmentName" value={attachment?.fileName ?? ""} />
          <input type="hidden" name="attachmentSha256" value={attachment?.sha256 ?? ""} />
          <DirectUpload
            key={uploadKey}
            id={`${id}-attachment`}
            label="Attachment (optional: one PDF, PNG or JPEG)"
            accept=".pdf,.png,.jpg,.jpeg,application/pdf,image/png,image/jpeg"
            targetAction={action}
            purpose="message-attachment"
            onUploaded={setAttachment}
          />
          <div id={`${id}-error`}>
            <FormError errors={fetcher.state === "idle" && fetcher.data?.error ? [fetcher.data.error] : null} />
          </div>
          <div className="flex justify-end">
            <button type="submit" className="btn-primary" disabled={sending}>
              {sending ? "Sending…" : "Send message"}
            </button>
          </div>
        </fetcher.Form>
      ) : (
        <p className="mt-4 border-t border-ink-100 pt-4 text-sm text-ink-600">{closedBecause ?? "This conversation takes no new messages."}</p>
      )}
    </section>
  );
}

/** An order's thread as either side's order page shows it: the other side named, the order's API address. */
export function OrderThread({
  orderId,
  yourSide,
  otherName,
  view,
}: {
  orderId: string;
  yourSide: "client" | "lab";
  otherName: string;
  view: { messages: ThreadMessageView[]; open: boolean; closedBecause?: string | null; unread: number };
}) {
  const other = otherName || (yourSide === "client" ? "the lab" : "the client");
  return (
    <MessageThread
      id="order-thread"
      title={`Messages with ${other}`}
      intro={`Only your organisation and ${yourSide === "client" ? "the lab" : "the client"} read this conversation; an admin reads it only if the order is disputed.`}
      messages={view.messages}
      yourSide={yourSide}
      action={`/api/orders/${orderId}/messages`}
      open={view.open}
      closedBecause={view.closedBecause}
      unread={view.unread}
    />
  );
}
