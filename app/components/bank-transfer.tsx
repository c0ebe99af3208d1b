// The bank details a client needs to pay an order by transfer, with what has arrived so far and the pay-by date.
import { useFormat } from "~/components/locale";

export interface BankTransferView {
  status: "open" | "paid" | "failed" | "expired";
  accountHolderName: string;
  iban: string;
  bic: string;
  reference: string;
  amountMinor: number;
  currency: string;
  receivedMinor: number;
  remainingMinor: number;
  returnedMinor: number;
  payBy: string;
}

/** An IBAN in groups of four, as it is printed on paper (ISO 13616). */
const grouped = (iban: string) => iban.replace(/(.{4})/g, "$1 ").trim();

export function BankTransferDetails({ transfer, purchaseOrderNumber }: { transfer: BankTransferView; purchaseOrderNumber: string | null }) {
  const fmt = useFormat();
  const money = (minor: number) => fmt.money(minor, transfer.currency);
  const partial = transfer.status === "open" && transfer.receivedMinor > 0;
  return (
    <div className="space-y-3">
      {transfer.status === "open" ? (
        <p className="text-sm text-ink-700">
          Transfer {partial ? "the rest" : "the total"} to the account below with the reference exactly as shown. It must arrive by{" "}
          <strong>{fmt.date(transfer.payBy)}</strong>; otherwise the order lapses and anything received is sent back.
        </p>
      ) : null}
      <dl aria-label="Bank transfer details" className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-1 rounded-md border border-ink-200 p-3 text-sm">
        <dt className="text-ink-600">Account holder</dt>
        <dd>{transfer.accountHolderName}</dd>
        <dt className="text-ink-600">IBAN</dt>
        <dd className="font-mono">{grouped(transfer.iban)}</dd>
        <dt className="text-ink-600">BIC</dt>
        <dd className="font-mono">{transfer.bic}</dd>
        <dt className="text-ink-600">Reference</dt>
        <dd className="font-mono font-semibold">{transfer.reference}</dd>
        <dt className="text-ink-600">Amount</dt>
        <dd>{money(transfer.amountMinor)}</dd>
        {purchaseOrderNumber ? (
          <>
            <dt className="text-ink-600">Purchase order</dt>
            <dd>{purchaseOrderNumber}</dd>
          </>
        ) : null}
        {transfer.receivedMinor > 0 ? (
          <>
            <dt className="text-ink-600">Received so far</dt>
            <dd>{money(transfer.receivedMinor)}</dd>
          </>
        ) : null}
        {transfer.status === "open" ? (
          <>
            <dt className="text-ink-600">Still to transfer</dt>
            <dd className="font-semibold">{money(transfer.remainingMinor)}</dd>
            <dt className="text-ink-600">Must arrive by</dt>
            <dd>{fmt.date(transfer.payBy)}</dd>
          </>
        ) : null}
        {transfer.returnedMinor > 0 ? (
          <>
            <dt className="text-ink-600">Sent back to you</dt>
            <dd>{money(transfer.returnedMinor)}</dd>
          </>
        ) : null}
      </dl>
      {partial ? (
        <p role="status" className="rounded-lg border border-caution-600/30 bg-caution-50 p-3 text-sm">
          Partly paid: {money(transfer.receivedMinor)} of {money(transfer.amountMinor)} has arrived. The order waits for the remaining{" "}
          {money(transfer.remainingMinor)}.
        </p>
      ) : null}
    </div>
  );
}
