// The purchase-order fields of a form: the PO number, and an optional PO file (PDF) uploaded straight to storage.
import { useState } from "react";
import { DirectUpload, type UploadedFile } from "~/components/direct-upload";

export function PurchaseOrderFields({
  id,
  requestId,
  required,
  defaultNumber,
  fileOnRecord,
}: {
  /** Unique per form on the page. */
  id: string;
  /** The request whose upload prefix the file goes under. */
  requestId: string;
  required: boolean;
  defaultNumber?: string | null;
  fileOnRecord?: string | null;
}) {
  const [file, setFile] = useState<UploadedFile | null>(null);
  return (
    <div className="space-y-2">
      <div>
        <label htmlFor={`${id}-number`} className="label">
          Purchase-order number{required ? " (required by your organisation)" : " (optional)"}
        </label>
        <input
          id={`${id}-number`}
          name="purchaseOrderNumber"
          className="input"
          maxLength={60}
          aria-required={required}
          defaultValue={defaultNumber ?? ""}
          autoComplete="off"
        />
      </div>
      <DirectUpload
        id={`${id}-file`}
        label="Purchase-order file (PDF, optional)"
        accept="application/pdf,.pdf"
        targetAction={`/client/requests/${requestId}/po-upload`}
        purpose="purchase-order"
        onUploaded={setFile}
      />
      {fileOnRecord && !file ? <p className="text-xs text-ink-600">On file: {fileOnRecord}. Upload again to replace it.</p> : null}
      {file ? (
        <>
          <input type="hidden" name="purchaseOrderFileKey" value={file.storageKey} />
          <input type="hidden" name="purchaseOrderFileName" value={file.fileName} />
          <input type="hidden" name="purchaseOrderFileSha256" value={file.sha256} />
        </>
      ) : null}
    </div>
  );
}

/** The purchase order as both sides of an order read it. */
export function PurchaseOrderFacts({ po }: { po: { number: string | null; fileName: string | null; fileUrl: string | null } }) {
  if (!po.number) return null;
  return (
    <>
      <dt className="text-ink-500">Purchase order</dt>
      <dd>
        <span className="font-mono">{po.number}</span>
        {po.fileUrl ? (
          <>
            {" · "}
            <a href={po.fileUrl} className="text-beam-700 underline">
              {po.fileName ?? "PO file"}
            </a>
          </>
        ) : null}
      </dd>
    </>
  );
}
