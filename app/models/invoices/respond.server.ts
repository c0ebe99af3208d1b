// One answer for an issued document: its JSON, or its PDF as a download named by its number with `?format=pdf`.
import type { InvoiceDocument } from "~/domain/invoice-document";
import { invoicePdf } from "~/models/invoices/pdf.server";

export async function documentResponse(request: Request, doc: InvoiceDocument, json: unknown) {
  const format = new URL(request.url).searchParams.get("format");
  if (format === "pdf") {
    const pdf = await invoicePdf(doc);
    return new Response(new Uint8Array(pdf), {
      headers: {
        "Content-Type": "application/pdf",
        "Content-Disposition": `attachment; filename="${doc.number}.pdf"`,
        "Cache-Control": "private, no-store",
      },
    });
  }
  if (format && format !== "json") {
    return Response.json({ error: "Ask for format=pdf or format=json, or leave the format out for JSON." }, { status: 400 });
  }
  return Response.json(json, { headers: { "Cache-Control": "private, no-store" } });
}
