// The order's invoice and credit notes as downloads, on both sides' order pages (docs/design.md#invoices).
import { useFormat } from "~/components/locale";

interface DocumentLink {
  number: string;
  grossMinor: number;
  url: string;
}

export function OrderDocuments({ documents, currency }: { documents: { invoice: DocumentLink; creditNotes: DocumentLink[] } | null; currency: string }) {
  const fmt = useFormat();
  if (!documents) return null;
  return (
    <section className="card mb-6" aria-labelledby="order-documents">
      <h2 id="order-documents" className="text-lg font-semibold">
        Invoice and credit notes
      </h2>
      <ul className="mt-2 space-y-1 text-sm">
        <li>
          Invoice{" "}
          <a href={documents.invoice.url} download className="font-mono text-beam-700 underline">
            {documents.invoice.number}
          </a>{" "}
          (PDF) — {fmt.money(documents.invoice.grossMinor, currency)}
        </li>
        {documents.creditNotes.map((c) => (
          <li key={c.number}>
            Credit note{" "}
            <a href={c.url} download className="font-mono text-beam-700 underline">
              {c.number}
            </a>{" "}
            (PDF) — {fmt.money(c.grossMinor, currency)} refunded
          </li>
        ))}
      </ul>
    </section>
  );
}
