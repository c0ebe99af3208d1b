// The audit log's words (docs/design.md#records-that-hold): kinds for filtering, sentences without ids, money as money.
import { describe, expect, it } from "vitest";
import { auditDetailWords, auditKindOf, auditSentence, type AuditContext } from "~/domain/audit-words";

const context: AuditContext = {
  who: "Marcus Lind",
  organisation: "Granite Ridge Characterisation",
  subject: null,
  orderNumber: "HCW-2026-0042",
  requestTitle: "Phase purity of NMC811 lot HC-2634",
  labName: "Granite Ridge Characterisation",
  currency: "EUR",
};

describe("audit kinds", () => {
  it("groups actions, files before orders and sign-ins apart", () => {
    expect(auditKindOf("order_file_archived")).toBe("files");
    expect(auditKindOf("order_received")).toBe("orders");
    expect(auditKindOf("signed_in")).toBe("sign_ins");
    expect(auditKindOf("quote_accepted")).toBe("requests");
    expect(auditKindOf("dispute_resolved")).toBe("disputes");
    expect(auditKindOf("lab_approved")).toBe("vetting");
    expect(auditKindOf("invitation_sent")).toBe("accounts");
    expect(auditKindOf("something_new")).toBeNull();
  });
});

describe("audit sentences", () => {
  it("says a quote's acceptance with the order number and the request title", () => {
    const { sentence } = auditSentence({ action: "quote_accepted", details: { orderId: "3f2b6c1e-1c2d-4e5f-8a9b-0c1d2e3f4a5b" } }, context);
    expect(sentence).toBe(
      "Marcus Lind accepted the quote of Granite Ridge Characterisation for the request “Phase purity of NMC811 lot HC-2634”, making order HCW-2026-0042",
    );
  });

  it("gives amounts as money (formatMoney's default locale, common practice for euros: €120.00) and leaves ids out", () => {
    const { sentence, details } = auditSentence(
      { action: "dispute_resolved", details: { refundMinor: 12_000, payoutMinor: 22_080, feeMinor: 1920, reason: "Half the lot measured." } },
      context,
    );
    expect(sentence).toBe("Marcus Lind resolved the dispute on order HCW-2026-0042: refund €120.00, payout to the lab €220.80, platform fee €19.20");
    expect(details).toBe("reason: Half the lot measured.");
    expect(auditDetailWords({ fileId: "3f2b6c1e-1c2d-4e5f-8a9b-0c1d2e3f4a5b", other: "3f2b6c1e-1c2d-4e5f-8a9b-0c1d2e3f4a5b", totalMinor: 500 }, "EUR")).toBe(
      "total: €5.00",
    );
  });

  it("says the newer actions of the dispute and the request's life in words, without their ids", () => {
    const read = auditSentence(
      {
        action: "dispute_evidence_read",
        details: { orderNumber: "HCW-2026-0042", orderId: "3f2b6c1e-1c2d-4e5f-8a9b-0c1d2e3f4a5b", read: "download of scan.xy v1" },
      },
      context,
    );
    expect(read).toEqual({ sentence: "Marcus Lind read download of scan.xy v1 of order HCW-2026-0042 through its dispute", details: "" });
    expect(auditSentence({ action: "dispute_lab_statement", details: { orderNumber: "HCW-2026-0042", rewritten: false } }, context).sentence).toBe(
      "Marcus Lind gave the lab's answer in the dispute on order HCW-2026-0042",
    );
    expect(auditSentence({ action: "request_revised", details: { revision: 2 } }, context).sentence).toBe(
      "Marcus Lind changed the request “Phase purity of NMC811 lot HC-2634” (revision 2)",
    );
    expect(auditSentence({ action: "quote_reconfirmed", details: { requestId: "3f2b6c1e-1c2d-4e5f-8a9b-0c1d2e3f4a5b", revision: 2 } }, context)).toEqual({
      sentence: "Marcus Lind re-confirmed the quote of Granite Ridge Characterisation for the request “Phase purity of NMC811 lot HC-2634” after revision 2",
      details: "",
    });
  });

  it("reads an action no sentence is written for as words with its order", () => {
    expect(auditSentence({ action: "order_received", details: {} }, { ...context, requestTitle: null }).sentence).toBe(
      "Marcus Lind: order received (order HCW-2026-0042)",
    );
  });
});
