// A lab's monthly payout statement as PDF, drawn on the server with @react-pdf/renderer in the look of the invoices
// (app/models/invoices/pdf.server.tsx, docs/decisions/013-pdf-documents.md): DM Sans from the same TrueType files.
import { Document, Page, renderToBuffer, StyleSheet, Text, View } from "@react-pdf/renderer";
import { registerPdfFonts } from "~/models/invoices/pdf.server";
import { monthName } from "~/domain/fee-invoice";
import { formatMoney } from "~/domain/money";
import type { LabStatement } from "./statements.server";

const s = StyleSheet.create({
  page: { fontFamily: "DM Sans", fontSize: 8.5, padding: 36, color: "#1d2430", lineHeight: 1.35 },
  title: { fontSize: 18, fontWeight: 600, lineHeight: 1.2, marginBottom: 4 },
  muted: { color: "#5b6472" },
  label: { fontSize: 8, color: "#5b6472", fontWeight: 600, marginBottom: 3, marginTop: 16 },
  strong: { fontWeight: 600 },
  table: { marginTop: 4, borderTopWidth: 1, borderColor: "#c8ced8" },
  th: { flexDirection: "row", borderBottomWidth: 1, borderColor: "#c8ced8", paddingVertical: 4, fontWeight: 600 },
  tr: { flexDirection: "row", borderBottomWidth: 0.5, borderColor: "#e1e5eb", paddingVertical: 4 },
  cOrder: { flex: 2.2 },
  cDate: { flex: 1.3 },
  cNum: { flex: 1.4, textAlign: "right" },
  footer: { position: "absolute", bottom: 24, left: 36, right: 36, fontSize: 7.5, color: "#5b6472", textAlign: "center" },
});

const day = (d: Date) => d.toLocaleDateString("en-GB", { day: "numeric", month: "short", year: "numeric", timeZone: "UTC" });

function StatementPdf({ st }: { st: LabStatement }) {
  const title = `Payout statement, ${monthName(st.month)}`;
  return (
    <Document title={`${title} — ${st.lab.name}`} author="Diffractory" creator="Diffractory" producer="Diffractory">
      <Page size="A4" orientation="landscape" style={s.page}>
        <Text style={s.title}>{title}</Text>
        <Text style={s.strong}>{st.lab.name}</Text>
        <Text style={s.muted}>Payouts made to the lab between the first and the last day of the month (UTC), from the platform's ledger.</Text>

        <Text style={s.label}>Payouts</Text>
        <View style={s.table}>
          <View style={s.th}>
            <Text style={s.cOrder}>Order</Text>
            <Text style={s.cOrder}>Purchase order</Text>
            <Text style={s.cDate}>Transfer date</Text>
            <Text style={s.cNum}>Paid by client</Text>
            <Text style={s.cNum}>Refunded</Text>
            <Text style={s.cNum}>Platform fee</Text>
            <Text style={s.cNum}>Paid to the lab</Text>
          </View>
          {st.rows.length === 0 ? (
            <View style={s.tr}>
              <Text>No payouts this month.</Text>
            </View>
          ) : null}
          {st.rows.map((r) => (
            <View style={s.tr} key={`${r.orderNumber} ${r.paidAt.toISOString()}`} wrap={false}>
              <Text style={s.cOrder}>{r.orderNumber}</Text>
              <Text style={s.cOrder}>{r.purchaseOrderNumber ?? "—"}</Text>
              <Text style={s.cDate}>{day(r.paidAt)}</Text>
              <Text style={s.cNum}>{formatMoney(r.grossMinor, r.currency)}</Text>
              <Text style={s.cNum}>{formatMoney(r.refundedMinor, r.currency)}</Text>
              <Text style={s.cNum}>{formatMoney(r.feeMinor, r.currency)}</Text>
              <Text style={s.cNum}>{formatMoney(r.netMinor, r.currency)}</Text>
            </View>
          ))}
          {st.totals.map((t) => (
            <View style={[s.tr, s.strong]} key={t.currency} wrap={false}>
              <Text style={s.cOrder}>Total {t.currency}</Text>
              <Text style={s.cOrder}>
                {t.orders} {t.orders === 1 ? "payout" : "payouts"}
              </Text>
              <Text style={s.cDate} />
              <Text style={s.cNum}>{formatMoney(t.grossMinor, t.currency)}</Text>
              <Text style={s.cNum}>{formatMoney(t.refundedMinor, t.currency)}</Text>
              <Text style={s.cNum}>{formatMoney(t.feeMinor, t.currency)}</Text>
              <Text style={s.cNum}>{formatMoney(t.netMinor, t.currency)}</Text>
            </View>
          ))}
        </View>

        <Text style={s.label}>Platform fee invoices for the month</Text>
        {st.feeInvoices.length === 0 ? (
          <Text>No fee invoice yet: the month's fee invoice is issued on the 1st of the next month.</Text>
        ) : (
          st.feeInvoices.map((f) => (
            <Text key={f.number}>
              Fee invoice {f.number} of {day(f.issuedAt)}: {formatMoney(f.totalMinor, f.currency)}
              {f.taxMinor > 0 ? ` (net ${formatMoney(f.netMinor, f.currency)}, VAT ${formatMoney(f.taxMinor, f.currency)})` : ""}, kept from the payouts above.
            </Text>
          ))
        )}
        <Text style={s.footer} fixed render={({ pageNumber, totalPages }) => `${title} · ${st.lab.name} · page ${pageNumber} of ${totalPages}`} />
      </Page>
    </Document>
  );
}

/** The statement as a PDF. */
export async function statementPdf(st: LabStatement): Promise<Buffer> {
  registerPdfFonts();
  return renderToBuffer(<StatementPdf st={st} />);
}
