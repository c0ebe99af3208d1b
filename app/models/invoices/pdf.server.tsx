// Invoices, credit notes and fee invoices as PDF, drawn on the server from the frozen document snapshot with
// @react-pdf/renderer (docs/decisions/013-pdf-documents.md) in the app's own typeface, DM Sans, shipped as full
// TrueType files so names and addresses in any Latin script print.
import { createRequire } from "node:module";
import { Document, Font, Page, renderToBuffer, StyleSheet, Text, View } from "@react-pdf/renderer";
import type { InvoiceDocument, InvoiceParty } from "~/domain/invoice-document";
import { formulaRuns } from "~/domain/formula";
import { formatMoney } from "~/domain/money";
import { addressLines } from "~/domain/profile-forms";

const require = createRequire(import.meta.url);
let fontsRegistered = false;
/** Registers DM Sans for every PDF the server draws (invoices here, statements in app/models/statements/), once. */
export function registerPdfFonts() {
  if (fontsRegistered) return;
  Font.register({
    family: "DM Sans",
    fonts: [
      { src: require.resolve("@expo-google-fonts/dm-sans/400Regular/DMSans_400Regular.ttf"), fontWeight: 400 },
      { src: require.resolve("@expo-google-fonts/dm-sans/600SemiBold/DMSans_600SemiBold.ttf"), fontWeight: 600 },
    ],
  });
  // Long words (an e-mail address, a VAT number) break anywhere rather than with hyphens in the middle of a code.
  Font.registerHyphenationCallback((word) => [word]);
  fontsRegistered = true;
}

const TITLES: Record<InvoiceDocument["kind"], string> = { invoice: "Invoice", credit_note: "Credit note", fee_invoice: "Invoice for platform fees" };

const s = StyleSheet.create({
  page: { fontFamily: "DM Sans", fontSize: 9.5, padding: 42, color: "#1d2430", lineHeight: 1.35 },
  title: { fontSize: 18, fontWeight: 600, lineHeight: 1.2, marginBottom: 6 },
  muted: { color: "#5b6472" },
  row: { flexDirection: "row", gap: 24 },
  party: { flex: 1, marginTop: 18 },
  label: { fontSize: 8, color: "#5b6472", fontWeight: 600, marginBottom: 3 },
  strong: { fontWeight: 600 },
  facts: { marginTop: 18, flexDirection: "row", flexWrap: "wrap", gap: 18 },
  table: { marginTop: 20, borderTopWidth: 1, borderColor: "#c8ced8" },
  th: { flexDirection: "row", borderBottomWidth: 1, borderColor: "#c8ced8", paddingVertical: 4, fontWeight: 600 },
  tr: { flexDirection: "row", borderBottomWidth: 0.5, borderColor: "#e1e5eb", paddingVertical: 4 },
  cDesc: { flex: 5 },
  cNum: { flex: 1.4, textAlign: "right" },
  totals: { marginTop: 12, marginLeft: "auto", width: 230 },
  totalRow: { flexDirection: "row", justifyContent: "space-between", paddingVertical: 2 },
  grand: { borderTopWidth: 1, borderColor: "#1d2430", marginTop: 4, paddingTop: 4, fontWeight: 600 },
  notes: { marginTop: 22 },
  footer: { position: "absolute", bottom: 28, left: 42, right: 42, fontSize: 7.5, color: "#5b6472", textAlign: "center" },
});

const percent = (bps: number) => `${(bps / 100).toLocaleString("en-GB", { maximumFractionDigits: 2 })} %`;
const day = (iso: string) =>
  new Date(`${iso.slice(0, 10)}T12:00:00Z`).toLocaleDateString("en-GB", { day: "numeric", month: "long", year: "numeric", timeZone: "UTC" });

function Party({ heading, party }: { heading: string; party: InvoiceParty }) {
  return (
    <View style={s.party}>
      <Text style={s.label}>{heading}</Text>
      <Text style={s.strong}>{party.name}</Text>
      {party.address ? addressLines(party.address).map((line) => <Text key={line}>{line}</Text>) : null}
      <Text>{party.taxId ? `VAT / tax id: ${party.taxId}` : "No VAT or tax id given"}</Text>
    </View>
  );
}

/**
 * Running text whose formulas print with sub- and superscripts (IUPAC Red Book IR-3.4): "Li3PO4" as Li₃PO₄. The
 * typeface has no Unicode subscript digits, so each count is a smaller run lowered by verticalAlign.
 */
function PdfFormulaText({ text }: { text: string }) {
  return (
    <>
      {formulaRuns(text).map((r, i) =>
        r.kind === "text" ? (
          r.text
        ) : (
          <Text key={i} style={{ fontSize: 7, verticalAlign: r.kind === "sub" ? "sub" : "super" }}>
            {r.text}
          </Text>
        ),
      )}
    </>
  );
}

function Fact({ label, value }: { label: string; value: string }) {
  return (
    <View>
      <Text style={s.label}>{label}</Text>
      <Text>{value}</Text>
    </View>
  );
}

function InvoicePdf({ doc }: { doc: InvoiceDocument }) {
  const money = (minor: number) => formatMoney(minor, doc.currency);
  return (
    <Document title={`${TITLES[doc.kind]} ${doc.number}`} author={doc.seller.name} creator="Diffractory" producer="Diffractory">
      <Page size="A4" style={s.page}>
        <Text style={s.title}>
          {TITLES[doc.kind]} {doc.number}
        </Text>
        {doc.issuedOnBehalfBy ? <Text style={s.muted}>Issued by {doc.issuedOnBehalfBy} in the name and on behalf of the seller.</Text> : null}
        <View style={s.row}>
          <Party heading="Seller" party={doc.seller} />
          <Party heading="Buyer" party={doc.buyer} />
        </View>
        <View style={s.facts}>
          <Fact label="Date of issue" value={day(doc.issueDate)} />
          {doc.supplyDate ? <Fact label="Date of supply or payment" value={day(doc.supplyDate)} /> : null}
          {doc.orderNumber ? <Fact label="Order" value={doc.orderNumber} /> : null}
          {doc.purchaseOrderNumber ? <Fact label="Your purchase order" value={doc.purchaseOrderNumber} /> : null}
          {doc.creditsInvoice ? <Fact label="Corrects invoice" value={`${doc.creditsInvoice.number} of ${day(doc.creditsInvoice.issueDate)}`} /> : null}
          {doc.period ? <Fact label="Period" value={doc.period} /> : null}
          <Fact label="Currency" value={doc.currency} />
        </View>
        <View style={s.table}>
          <View style={s.th}>
            <Text style={s.cDesc}>Description</Text>
            <Text style={s.cNum}>Quantity</Text>
            <Text style={s.cNum}>Unit price</Text>
            <Text style={s.cNum}>Tax rate</Text>
            <Text style={s.cNum}>Net amount</Text>
          </View>
          {doc.lines.map((line, i) => (
            <View style={s.tr} key={i} wrap={false}>
              <Text style={s.cDesc}>
                <PdfFormulaText text={line.description} />
              </Text>
              <Text style={s.cNum}>{line.quantity}</Text>
              <Text style={s.cNum}>{money(line.unitPriceMinor)}</Text>
              <Text style={s.cNum}>{percent(line.taxRateBps)}</Text>
              <Text style={s.cNum}>{money(line.netMinor)}</Text>
            </View>
          ))}
        </View>
        <View style={s.totals} wrap={false}>
          {doc.taxPerRate.map((r) => (
            <View style={s.totalRow} key={r.taxRateBps}>
              <Text>
                Tax at {percent(r.taxRateBps)} on {money(r.netMinor)}
              </Text>
              <Text>{money(r.taxMinor)}</Text>
            </View>
          ))}
          <View style={s.totalRow}>
            <Text>Total net</Text>
            <Text>{money(doc.totals.netMinor)}</Text>
          </View>
          <View style={s.totalRow}>
            <Text>Total tax</Text>
            <Text>{money(doc.totals.taxMinor)}</Text>
          </View>
          <View style={[s.totalRow, s.grand]}>
            <Text>{doc.kind === "credit_note" ? "Total credited" : "Total"}</Text>
            <Text>{money(doc.totals.grossMinor)}</Text>
          </View>
        </View>
        {doc.notes.length ? (
          <View style={s.notes}>
            {doc.notes.map((note) => (
              <Text key={note}>{note}</Text>
            ))}
          </View>
        ) : null}
        <Text style={s.footer} fixed render={({ pageNumber, totalPages }) => `${TITLES[doc.kind]} ${doc.number} · page ${pageNumber} of ${totalPages}`} />
      </Page>
    </Document>
  );
}

/** The PDF of an issued document. */
export async function invoicePdf(doc: InvoiceDocument): Promise<Buffer> {
  registerPdfFonts();
  return renderToBuffer(<InvoicePdf doc={doc} />);
}
