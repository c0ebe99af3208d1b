// The audit log in words: each action a sentence, grouped into kinds for filtering, with sign-ins kept apart
// (docs/design.md#records-that-hold). Pure and browser-safe; the names of subjects are looked up by the model.
import { formatMoney } from "~/domain/money";

/** The kinds an admin filters the log by; `sign_ins` is its own view, never mixed with the rest. */
export const AUDIT_KINDS = ["accounts", "vetting", "requests", "orders", "money", "files", "disputes", "sign_ins"] as const;
export type AuditKind = (typeof AUDIT_KINDS)[number];

export const AUDIT_KIND_LABELS: Record<AuditKind, string> = {
  accounts: "Accounts and members",
  vetting: "Labs and vetting",
  requests: "Requests and quotes",
  orders: "Orders",
  money: "Money",
  files: "Files and share links",
  disputes: "Disputes",
  sign_ins: "Sign-ins",
};

/**
 * Which actions belong to a kind: exact names, then name prefixes. Files are tried before orders (`order_file_…`),
 * disputes before money; an action no kind names is shown under "all" only.
 */
export const AUDIT_KIND_ACTIONS: Record<AuditKind, { exact: string[]; prefixes: string[] }> = {
  sign_ins: { exact: ["signed_in", "signed_out", "second_factor_failed", "sign_in_failed"], prefixes: [] },
  files: { exact: [], prefixes: ["order_file_", "share_link_", "file_", "check_"] },
  disputes: { exact: [], prefixes: ["dispute_"] },
  money: { exact: [], prefixes: ["payment_", "refund_", "payout_", "ledger_", "transfer_", "exchange_rate_"] },
  accounts: {
    exact: ["account_created", "password_changed", "password_reset", "password_reset_requested", "second_factor_enabled", "second_factor_disabled"],
    prefixes: ["invitation_", "api_token_", "member_", "membership_", "notification_", "profile_", "client_kind_"],
  },
  vetting: {
    exact: ["hazard_acceptance_saved", "price_list_saved"],
    prefixes: ["lab_", "instrument_", "stage_", "calibration_"],
  },
  requests: { exact: ["hazards_acknowledged"], prefixes: ["request_", "quote_", "message_"] },
  orders: { exact: [], prefixes: ["order_", "sample_", "receipt_", "shipment_"] },
};

/** The order kinds are tried in: an action belongs to the first whose names or prefixes match. */
export const AUDIT_KIND_PRECEDENCE: readonly AuditKind[] = ["sign_ins", "files", "disputes", "money", "accounts", "vetting", "requests", "orders"];

/** The kind of an action, or null when no kind names it. */
export function auditKindOf(action: string): AuditKind | null {
  for (const kind of AUDIT_KIND_PRECEDENCE) {
    const { exact, prefixes } = AUDIT_KIND_ACTIONS[kind];
    if (exact.includes(action) || prefixes.some((p) => action.startsWith(p))) return kind;
  }
  return null;
}

/** What the model found out about an entry's subject and the records its details point to (names, never ids). */
export interface AuditContext {
  /** The person who acted ("Marcus Lind"), or null for the platform itself. */
  who: string | null;
  /** The organisation the entry belongs to. */
  organisation: string | null;
  /** The subject in words: an order number, a request's title, a lab's or file's name… */
  subject: string | null;
  /** The order the entry concerns, by number. */
  orderNumber: string | null;
  /** The request the entry concerns, by title. */
  requestTitle: string | null;
  /** The lab of a quote or lab entry. */
  labName: string | null;
  /** The currency amounts in the details are in (the order's, the quote's, or the details' own). */
  currency: string | null;
}

export interface AuditEntryIn {
  action: string;
  details: Record<string, unknown>;
}

const quoted = (s: string | null | undefined) => (s ? `“${s}”` : null);
const str = (v: unknown) => (typeof v === "string" && v.trim() ? v : null);

/** A `…Minor` amount as money in the entry's currency (a bare number with two decimals when none is known). */
function moneyOf(v: unknown, currency: string | null): string | null {
  if (typeof v !== "number" || !Number.isFinite(v)) return null;
  return currency ? formatMoney(v, currency) : (v / 100).toFixed(2);
}

const HUMAN_KEYS: Record<string, string> = {
  otherSessionsEnded: "other sessions ended",
  sessionsEnded: "sessions ended",
  alreadyMember: "already a member",
  secondFactor: "with the second factor",
  deviationA: "deviation (Å)",
  refinedA: "refined a (Å)",
  expiresAt: "valid until",
};

/** Keys that hold ids or are already said by the sentence: never listed among the details. */
const HIDDEN_KEYS = new Set(["orderId", "requestId", "quoteId", "labId", "fileId", "userId", "organisationId", "prefix", "currency", "failures"]);
const UUID = /[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}/i;

function keyWords(k: string) {
  return (
    HUMAN_KEYS[k] ??
    k
      .replace(/Minor$/, "")
      .replace(/([A-Z])/g, " $1")
      .toLowerCase()
  );
}

function valueWords(v: unknown, currency: string | null, key: string): string | null {
  if (v === null || v === undefined || v === false || v === "") return null;
  if (key.endsWith("Minor")) return moneyOf(v, currency);
  if (v === true) return "yes";
  if (typeof v === "number") return Number.isInteger(v) ? String(v) : String(Number(v.toPrecision(4)));
  if (typeof v === "string") {
    if (UUID.test(v)) return null;
    if (/^\d{4}-\d{2}-\d{2}T/.test(v)) return v.slice(0, 16).replace("T", " ");
    return v.length > 200 ? `${v.slice(0, 200)}…` : v;
  }
  if (Array.isArray(v)) {
    const parts = v.map((x) => valueWords(x, currency, key)).filter((x): x is string => !!x);
    return parts.length ? parts.join(", ") : null;
  }
  if (typeof v === "object") {
    const parts = Object.entries(v as Record<string, unknown>)
      .map(([k, x]) => {
        const w = valueWords(x, currency, k);
        return w ? `${keyWords(k)} ${w}` : null;
      })
      .filter((x): x is string => !!x);
    return parts.length ? parts.join(", ") : null;
  }
  return null;
}

/** The details the sentence does not already say, in words: money as money, ids left out. */
export function auditDetailWords(details: Record<string, unknown>, currency: string | null, said: string[] = []): string {
  return Object.entries(details)
    .filter(([k]) => !HIDDEN_KEYS.has(k) && !said.includes(k) && !k.endsWith("Id"))
    .map(([k, v]) => {
      const w = valueWords(v, currency, k);
      if (!w) return null;
      return v === true ? keyWords(k) : `${keyWords(k)}: ${w}`;
    })
    .filter((x): x is string => !!x)
    .join("; ");
}

const VETTING_VERBS: Record<string, string> = {
  lab_in_review: "took {lab} into review",
  lab_approved: "approved {lab}",
  lab_rejected: "rejected {lab}",
  lab_suspended: "suspended {lab}",
  lab_reinstated: "reinstated {lab}",
  lab_changes_requested: "asked {lab} for changes",
};

/** The action's name as words, for an action no sentence is written for ("request_edited" → "request edited"). */
const actionWords = (action: string) => action.replace(/_/g, " ");

/**
 * One entry as a sentence, and the details it does not say. Names come from the context; no id ever appears,
 * and every amount is money in its currency.
 */
export function auditSentence(entry: AuditEntryIn, c: AuditContext): { sentence: string; details: string } {
  const d = entry.details ?? {};
  const who = c.who ?? "Diffractory";
  const order = c.orderNumber ? `order ${c.orderNumber}` : "an order";
  const request = quoted(c.requestTitle) ? `the request ${quoted(c.requestTitle)}` : "a request";
  const lab = c.labName ?? c.organisation ?? "a lab";
  const subject = c.subject;
  const money = (k: string) => moneyOf(d[k], c.currency);
  const said: string[] = [];
  const say = (sentence: string, ...keys: string[]) => {
    said.push(...keys);
    return sentence;
  };
  const s = ((): string => {
    const vetting = VETTING_VERBS[entry.action];
    if (vetting) return say(`${who} ${vetting.replace("{lab}", lab)}`, "from", "to");
    switch (entry.action) {
      case "signed_in":
        return say(d.secondFactor ? `${who} signed in with the second factor` : `${who} signed in`, "secondFactor");
      case "signed_out":
        return `${who} signed out`;
      case "second_factor_failed":
        return `${who} gave a wrong sign-in code${typeof d.failures === "number" ? ` (${d.failures} in a row)` : ""}`;
      case "sign_in_failed":
        return `A sign-in as ${str(d.email) ?? "someone"} failed`;
      case "password_changed":
        return `${who} changed their password`;
      case "password_reset_requested":
        return `${who} asked for a password reset`;
      case "password_reset":
        return `${who} set a new password from a reset link`;
      case "second_factor_enabled":
        return `${who} turned on the second factor`;
      case "second_factor_disabled":
        return `${who} turned off the second factor`;
      case "account_created":
        return `${who} created the account of ${c.organisation ?? subject ?? "an organisation"}`;
      case "lab_applied":
        return `${who} registered the lab ${c.organisation ?? subject ?? ""}`.trim();
      case "invitation_sent":
        return say(`${who} invited ${str(d.email) ?? "someone"} to ${c.organisation ?? "the organisation"} as ${str(d.role) ?? "a member"}`, "email", "role");
      case "invitation_revoked":
        return `${who} revoked the invitation of ${subject ?? "a person"} to ${c.organisation ?? "the organisation"}`;
      case "invitation_accepted":
        return say(`${who} joined ${c.organisation ?? "an organisation"} as ${str(d.role) ?? "a member"}`, "role");
      case "profile_saved":
        return say(
          `${who} saved the profile of ${c.organisation ?? "the organisation"}${str(d.clientKind) ? `, stating its kind as ${str(d.clientKind)?.replace("_", "-")}` : ""}`,
          "taxId",
          "clientKind",
        );
      case "profile_address_added":
      case "profile_address_changed":
      case "profile_address_removed": {
        const verb = entry.action.slice("profile_address_".length);
        return say(
          `${who} ${verb} the ${str(d.kind) ?? "parcel"} address ${quoted(str(d.label)) ?? ""} of ${c.organisation ?? "the organisation"}`,
          "label",
          "kind",
        );
      }
      case "profile_address_default":
        return say(
          `${who} made ${quoted(str(d.label)) ?? "an address"} the default ${str(d.kind) ?? ""} address of ${c.organisation ?? "the organisation"}`,
          "label",
          "kind",
        );
      case "client_kind_confirmed":
        return say(`${who} confirmed ${c.organisation ?? "a client"} as ${(str(d.clientKind) ?? "its stated kind").replace("_", "-")}`, "clientKind");
      case "api_token_created":
        return say(`${who} created the API token ${quoted(str(d.name) ?? subject) ?? ""} for ${c.organisation ?? "the lab"}`, "name");
      case "api_token_revoked":
        return `${who} revoked the API token ${quoted(subject) ?? ""} of ${c.organisation ?? "the lab"}`;
      case "lab_application_submitted":
        return say(`${who} submitted ${lab} for vetting`, "from", "to");
      case "lab_approval_override":
        return say(`${who} approved ${lab} over its calibration check`, "reason");
      case "instrument_added":
      case "instrument_updated":
      case "instrument_removed":
        return say(`${who} ${entry.action.slice(11)} the instrument ${quoted(str(d.name) ?? subject) ?? ""} of ${lab}`, "name");
      case "instrument_calibrated":
        return say(`${who} recorded a calibration scan of ${quoted(str(d.name) ?? subject) ?? "an instrument"} at ${lab}`, "fileName", "passed", "to");
      case "instrument_calibration_interval_set":
        return say(`${who} set the calibration schedule of ${quoted(str(d.name) ?? subject) ?? "an instrument"} at ${lab}`, "from", "to");
      case "instrument_calibration_overdue":
        return `The calibration of ${quoted(str(d.name) ?? subject) ?? "an instrument"} at ${lab} became overdue`;
      case "instrument_profile_saved":
        return `${who} saved the instrument profile of ${quoted(subject) ?? "an instrument"} at ${lab}`;
      case "stage_added":
      case "stage_updated":
      case "stage_removed":
        return say(`${who} ${entry.action.slice(6)} the sample stage ${quoted(str(d.name) ?? subject) ?? ""} of ${lab}`, "name");
      case "hazard_acceptance_saved":
        return `${who} saved the hazards ${lab} accepts`;
      case "price_list_saved":
        return `${who} saved the price list of ${lab}`;
      case "request_draft_created":
        return `${who} started ${request} as a draft`;
      case "request_published":
        return `${who} published ${request}`;
      case "request_withdrawn":
        return `${who} withdrew ${request}`;
      case "request_expired":
        return `${request.charAt(0).toUpperCase()}${request.slice(1)} expired`;
      case "request_revised":
        return say(`${who} changed ${request}${typeof d.revision === "number" ? ` (revision ${d.revision})` : ""}`, "revision");
      case "request_repeated":
        return say(`${who} started ${request} again as a new draft`, "repeatOf");
      case "hazards_acknowledged":
        return `${who} acknowledged the hazards of ${request} for ${lab}`;
      case "quote_sent":
        return say(`${who} sent a quote${money("totalMinor") ? ` of ${money("totalMinor")}` : ""} from ${lab} for ${request}`, "totalMinor");
      case "quote_withdrawn":
        return `${who} withdrew the quote of ${lab} for ${request}`;
      case "quote_reconfirmed":
        return say(
          `${who} re-confirmed the quote of ${lab} for ${request}${typeof d.revision === "number" ? ` after revision ${d.revision}` : ""}`,
          "revision",
        );
      case "quote_accepted":
        return `${who} accepted the quote of ${lab} for ${request}, making ${order}`;
      case "order_purchase_order_set":
        return say(
          str(d.purchaseOrderNumber)
            ? `${who} set the purchase-order number of ${order} to ${d.purchaseOrderNumber}`
            : `${who} removed the purchase-order number of ${order}`,
          "purchaseOrderNumber",
        );
      case "exchange_rate_set":
        return say(
          `${who} set the indicative rate 1 ${str(d.base) ?? "?"} = ${str(d.rate) ?? "?"} ${str(d.quote) ?? "?"} as of ${str(d.asOf) ?? "an unnamed day"}${str(d.source) ? ` (source: ${d.source})` : ""}`,
          "base",
          "quote",
          "rate",
          "asOf",
          "source",
        );
      case "dispute_lab_statement":
        return say(`${who} ${d.rewritten ? "rewrote" : "gave"} the lab's answer in the dispute on ${order}`, "rewritten", "orderNumber");
      case "dispute_evidence_read":
        return say(`${who} read ${str(d.read) ?? "the data"} of ${order} through its dispute`, "read", "orderNumber");
      case "dispute_resolved": {
        const parts = [
          ["refundMinor", "refund"],
          ["payoutMinor", "payout to the lab"],
          ["feeMinor", "platform fee"],
        ]
          .filter(([k]) => money(k))
          .map(([k, label]) => `${label} ${money(k)}`);
        return say(`${who} resolved the dispute on ${order}${parts.length ? `: ${parts.join(", ")}` : ""}`, "refundMinor", "payoutMinor", "feeMinor");
      }
      case "order_file_deleted":
      case "order_file_archived":
      case "order_file_restored": {
        const verb = entry.action.slice("order_file_".length);
        const file = str(d.name) ? `${d.name}${typeof d.version === "number" ? ` v${d.version}` : ""}` : (subject ?? "a file");
        return say(`${who} ${verb} ${file} of ${order}`, "name", "version");
      }
      case "share_link_created":
        return say(`${who} shared ${order}'s data room with ${str(d.label) ?? subject ?? "someone"}`, "label");
      case "share_link_revoked":
        return `${who} revoked the share link for ${subject ?? "someone"} on ${order}`;
      case "share_link_opened":
        return `The share link for ${subject ?? "someone"} opened ${order}'s data room`;
      default: {
        const about = [c.orderNumber ? order : null, c.requestTitle ? request : null, !c.orderNumber && !c.requestTitle ? subject : null].filter(Boolean);
        return `${who}: ${actionWords(entry.action)}${about.length ? ` (${about.join(", ")})` : ""}`;
      }
    }
  })();
  return { sentence: s.replace(/\s+/g, " ").trim(), details: auditDetailWords(d, c.currency, said) };
}
