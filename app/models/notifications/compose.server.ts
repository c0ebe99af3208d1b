// The wording of every milestone message, per audience: what happened, the facts, the next step and a link.
import type { Order } from "~/db/schema";
import { formulaUnicode } from "~/domain/formula";
import { formatMoney } from "~/domain/money";
import type { Letter } from "~/models/notifications/letters.server";
import type { MilestoneKind } from "~/domain/milestones";

export type Audience = "client" | "lab" | "admin";

export interface OrderContext {
  order: Order;
  requestTitle: string;
  clientName: string;
  labName: string;
  note: string;
  /** Each sample's lattice-check verdicts, for "data delivered". */
  verdicts?: { sample: string; file: string; verdict: string }[];
}

/** How people read an order: its number (docs/design.md#order-numbers). */
const ref = (order: Pick<Order, "number">) => order.number;
const day = (d: Date) => d.toLocaleDateString("en-GB", { day: "numeric", month: "long", year: "numeric", timeZone: "UTC" });

const VERDICT_WORDS: Record<string, string> = {
  consistent: "consistent with the declared cell",
  review: "needs a closer look",
  inconsistent: "inconsistent with the declared cell",
};

function orderFacts(c: OrderContext): [string, string][] {
  return [
    ["Order", ref(c.order)],
    ["Request", formulaUnicode(c.requestTitle)],
    ["Client", c.clientName],
    ["Lab", c.labName],
    ["Amount", formatMoney(c.order.amountMinor, c.order.currency)],
    // The client's procurement matches money to its purchase order (docs/design.md#purchase-orders).
    ...(c.order.purchaseOrderNumber ? ([["Purchase order", c.order.purchaseOrderNumber]] as [string, string][]) : []),
  ];
}

const orderPath = (c: OrderContext, side: Audience) =>
  side === "lab" ? `/lab/orders/${c.order.id}` : side === "admin" ? `/admin/disputes/${c.order.id}` : `/client/orders/${c.order.id}`;
const withNote = (c: OrderContext, facts: [string, string][]) => (c.note ? [...facts, ["Note", c.note] as [string, string]] : facts);

/** A message about an order's milestone for one side of the order; its subject names the order by its number. */
export function orderLetter(kind: MilestoneKind, c: OrderContext, side: Audience): Letter {
  const letter = orderLetterWords(kind, c, side);
  return letter.subject.includes(ref(c.order)) ? letter : { ...letter, subject: `${letter.subject} · order ${ref(c.order)}` };
}

function orderLetterWords(kind: MilestoneKind, c: OrderContext, side: Audience): Letter {
  const title = formulaUnicode(c.requestTitle);
  const facts = withNote(c, orderFacts(c));
  const link = { path: orderPath(c, side), label: "Open the order" };
  const base = { facts, link };
  switch (kind) {
    case "funds_held":
      return side === "client"
        ? {
            ...base,
            subject: `Payment held for “${title}”`,
            heading: "Your payment is held",
            paragraphs: [
              `We received ${formatMoney(c.order.amountMinor, c.order.currency)} for order ${ref(c.order)}. Diffractory holds it until you accept the delivered data; ${c.labName} is paid only then.`,
            ],
            nextStep: "Pack the samples with the printed packing slip and mark the order as shipped.",
          }
        : {
            ...base,
            subject: `Order ${ref(c.order)} is paid — samples will follow`,
            heading: "The client has paid",
            paragraphs: [
              `${c.clientName} paid for “${title}”. The money is held by Diffractory and released to your payout account when the delivery is accepted.`,
            ],
            nextStep: "Wait for the parcel; the order page shows the hazard declaration of every sample.",
          };
    case "samples_shipped":
      return {
        ...base,
        subject: `Samples on their way: “${title}”`,
        heading: "Samples are on their way",
        paragraphs: [
          `${c.clientName} has shipped the samples of order ${ref(c.order)}.`,
          "Read each sample's hazard declaration before the parcel is opened. A declaration informs the lab; it does not replace the safety data sheet, the carrier's dangerous-goods rules, local regulations or the approval of your radiation and chemical safety officers.",
        ],
        nextStep: "Check the parcel against its declaration on arrival, then mark it received — or refuse it if it does not match.",
      };
    case "samples_received":
      return {
        ...base,
        subject: `${c.labName} received your samples`,
        heading: "Samples received",
        paragraphs: [`${c.labName} received the parcel for order ${ref(c.order)} and found it matches its declaration.`],
        nextStep: "Nothing to do now; you will hear from us when the measurement starts and when the data is in your data room.",
      };
    case "refused_on_arrival":
      return {
        ...base,
        subject: `Parcel refused on arrival: “${title}”`,
        heading: "The lab refused the parcel",
        paragraphs: [
          `${c.labName} refused the parcel of order ${ref(c.order)} on arrival because it did not match its declaration. What is held is refunded, less the lab's handling fee.`,
        ],
        nextStep: "Read the lab's note on the order page and arrange the return of the parcel with the lab.",
      };
    case "measuring_started":
      return {
        ...base,
        subject: `Measurement started: “${title}”`,
        heading: "Your samples are being measured",
        paragraphs: [`${c.labName} has started measuring the samples of order ${ref(c.order)}.`],
        nextStep: "Wait for the data; every scan is checked automatically against its declared cell.",
      };
    case "data_delivered": {
      const rows = (c.verdicts ?? []).map((v) => [v.sample, v.file, VERDICT_WORDS[v.verdict] ?? v.verdict]);
      return {
        ...base,
        subject: `Data delivered: “${title}”`,
        heading: "Your data is in the data room",
        paragraphs: [
          `${c.labName} delivered the data of order ${ref(c.order)}. Each scan went through the lattice-parameter check; the verdicts are below and the plots are in the data room.`,
        ],
        table: { caption: "Lattice check per sample", columns: ["Sample", "Scan", "Verdict"], rows: rows.length ? rows : [["—", "—", "no completed check"]] },
        nextStep: `Review the data and accept the delivery, or open a dispute, within ${c.order.reviewWindowDays} days; after that the delivery is accepted automatically.`,
      };
    }
    case "transfer_reminder":
      return {
        ...base,
        subject: `Bank transfer not yet received: “${title}”`,
        heading: "Your bank transfer has not arrived in full",
        paragraphs: [
          `We have not yet received the whole amount for order ${ref(c.order)} by bank transfer. If it does not arrive in time, the order lapses and anything received is sent back.`,
        ],
        nextStep: "Make the transfer with the reference shown, or pay by card on the order page.",
      };
    case "review_window_ending": {
      const ends = new Date((c.order.deliveredAt ?? new Date()).getTime() + c.order.reviewWindowDays * 86_400_000);
      return {
        ...base,
        facts: [...facts, ["Review window ends", day(ends)]],
        subject: `Review window ends tomorrow: “${title}”`,
        heading: "One day left to review the data",
        paragraphs: [`The review window of order ${ref(c.order)} ends on ${day(ends)}. Then the delivery is accepted automatically and ${c.labName} is paid.`],
        nextStep: "Accept the delivery, or open a dispute if the data is not what was agreed.",
      };
    }
    case "delivery_accepted":
      return side === "client"
        ? {
            ...base,
            subject: `Delivery accepted: “${title}”`,
            heading: "The delivery is accepted",
            paragraphs: [`The delivery of order ${ref(c.order)} is accepted and the held money is being released to ${c.labName}.`],
            nextStep: "Nothing to do; the data stays in your data room.",
          }
        : {
            ...base,
            subject: `${c.clientName} accepted your delivery`,
            heading: "Delivery accepted",
            paragraphs: [`The delivery of order ${ref(c.order)} is accepted. The payout to your account is on its way.`],
            nextStep: "Watch for the payout message; the payouts page lists every transfer.",
          };
    case "payout_sent":
      return {
        ...base,
        link: { path: "/lab/payouts", label: "See your payouts" },
        subject: `Payout sent for order ${ref(c.order)}`,
        heading: "Payout sent",
        paragraphs: [`We transferred the total of order ${ref(c.order)}, less the platform fee of ${c.order.platformFeeBps / 100} %, to your payout account.`],
        nextStep: "Nothing to do; the payouts page shows the transfer.",
      };
    case "order_cancelled":
      return {
        ...base,
        subject: `Order cancelled: “${title}”`,
        heading: "The order is cancelled",
        paragraphs: [`Order ${ref(c.order)} is cancelled. Any payment held for it is refunded in full to the client.`],
        nextStep: side === "client" ? "Post the request again if you still need the measurement." : "Nothing to do.",
      };
    case "dispute_opened":
      return side === "admin"
        ? {
            ...base,
            link: { path: `/admin/disputes/${c.order.id}`, label: "Open the dispute" },
            subject: `Dispute to settle: order ${ref(c.order)}`,
            heading: "A dispute needs a decision",
            paragraphs: [`${c.clientName} opened a dispute on the data ${c.labName} delivered. The money stays frozen until an admin decides.`],
            nextStep: "Read both sides and the check results, then settle the split.",
          }
        : {
            ...base,
            subject: `Dispute opened on “${title}”`,
            heading: "A dispute is open",
            paragraphs: [`A dispute is open on order ${ref(c.order)}. The held money stays frozen until a Diffractory admin decides how it is split.`],
            nextStep:
              side === "lab"
                ? "Add what the admin should know to the order page; keep the raw data."
                : "The admin may contact you; nothing else is needed now.",
          };
    case "dispute_answered":
      return side === "admin"
        ? {
            ...base,
            link: { path: `/admin/disputes/${c.order.id}`, label: "Open the dispute" },
            subject: `The lab answered the dispute on order ${ref(c.order)}`,
            heading: "Both sides of a dispute are in",
            paragraphs: [`${c.labName} answered the dispute ${c.clientName} opened. Its statement is below; its evidence is on the dispute page.`],
            nextStep: "Read both statements, the evidence and the check results, then settle the split.",
          }
        : {
            ...base,
            subject: `${c.labName} answered your dispute on “${title}”`,
            heading: "The lab answered your dispute",
            paragraphs: [
              `${c.labName} sent its statement on the dispute about order ${ref(c.order)}. It is below, and on the order page with any evidence the lab added.`,
            ],
            nextStep: "Add evidence of your own on the order page if the statement leaves something out; an admin then decides.",
          };
    case "dispute_evidence_added":
      return {
        ...base,
        ...(side === "admin" ? { link: { path: `/admin/disputes/${c.order.id}`, label: "Open the dispute" } } : {}),
        subject: `New evidence in the dispute on order ${ref(c.order)}`,
        heading: "Evidence was added to a dispute",
        paragraphs: [
          `A file was added to the dispute on order ${ref(c.order)} (${title}). It is listed with the statements on the ${side === "admin" ? "dispute" : "order"} page.`,
        ],
        nextStep:
          side === "admin" ? "Read it with the rest of the evidence before settling the split." : "Read it; add a file of your own if it leaves something out.",
      };
    case "dispute_resolved":
      return {
        ...base,
        subject: `Dispute resolved: “${title}”`,
        heading: "The dispute is resolved",
        paragraphs: [`A Diffractory admin settled the dispute on order ${ref(c.order)}. The decision and the split are on the order page.`],
        nextStep: "Nothing to do; refunds and payouts follow the decision.",
      };
    default:
      throw new Error(`No order message for ${kind}`);
  }
}

export function requestOpenLetter(r: { id: string; title: string; clientName: string; technique: string; deadline: string | null }): Letter {
  return {
    subject: `New request: “${formulaUnicode(r.title)}”`,
    heading: "A request your lab can serve",
    paragraphs: [`${r.clientName} posted a measurement request that fits your instruments and hazard acceptance.`],
    facts: [
      ["Request", formulaUnicode(r.title)],
      ["Technique", r.technique.replaceAll("_", " ")],
      ...(r.deadline ? ([["Deadline", r.deadline]] as [string, string][]) : []),
    ],
    nextStep: "Read the samples and their hazard declarations, then send a quote if you can take it on.",
    link: { path: `/lab/requests/${r.id}`, label: "Open the request" },
  };
}

/** How much of a message an e-mail quotes; the rest is read in Diffractory. */
const MESSAGE_EXCERPT = 600;

export function messageLetter(m: {
  fromName: string;
  authorName: string;
  requestTitle: string;
  orderNumber: string | null;
  body: string;
  attachmentName: string | null;
  path: string;
}): Letter {
  const excerpt = m.body.length > MESSAGE_EXCERPT ? `${m.body.slice(0, MESSAGE_EXCERPT).trimEnd()}…` : m.body;
  return {
    subject: m.orderNumber
      ? `New message from ${m.fromName} · order ${m.orderNumber}`
      : `New message from ${m.fromName} about “${formulaUnicode(m.requestTitle)}”`,
    heading: `${m.fromName} wrote`,
    paragraphs: [`${m.authorName} of ${m.fromName} wrote:`, excerpt],
    facts: [
      ["Request", formulaUnicode(m.requestTitle)],
      ...(m.orderNumber ? ([["Order", m.orderNumber]] as [string, string][]) : []),
      ...(m.attachmentName ? ([["Attachment", m.attachmentName]] as [string, string][]) : []),
    ],
    nextStep: "Answer in the conversation on Diffractory; replies to this e-mail are not read.",
    link: { path: m.path, label: "Open the conversation" },
  };
}

/** A published request the lab quoted on was changed: what changed, and that the quote waits for the lab. */
export function requestRevisedLetter(r: { id: string; title: string; clientName: string; summary: string }): Letter {
  return {
    subject: `“${formulaUnicode(r.title)}” was changed by the client`,
    heading: "A request you quoted on has changed",
    paragraphs: [
      `${r.clientName} changed the request after your quote: ${r.summary}.`,
      "The client cannot accept your quote until you re-confirm it for the changed request, withdraw it or send a new one.",
    ],
    facts: [
      ["Request", formulaUnicode(r.title)],
      ["Client", r.clientName],
    ],
    nextStep: "Read the changes, then re-confirm your quote or send a new one.",
    link: { path: `/lab/requests/${r.id}`, label: "Open the request" },
  };
}

/** A request closed without an order: withdrawn by the client, or past its deadline. */
export function requestClosedLetter(how: "withdrawn" | "expired", r: { id: string; title: string; clientName: string }, side: "client" | "lab"): Letter {
  const what = how === "withdrawn" ? `${r.clientName} withdrew the request` : "The request reached its deadline without an accepted quote";
  return {
    subject: how === "withdrawn" ? `“${formulaUnicode(r.title)}” was withdrawn` : `“${formulaUnicode(r.title)}” has expired`,
    heading: how === "withdrawn" ? "A request was withdrawn" : "A request has expired",
    paragraphs: [`${what}. ${side === "lab" ? "Your quote on it has lapsed; nothing more is needed from your lab." : "The quotes on it have lapsed."}`],
    facts: [
      ["Request", formulaUnicode(r.title)],
      ["Client", r.clientName],
    ],
    nextStep: side === "client" ? "Use “Order again” on the request to post it anew with a later deadline." : "No action is needed.",
    link: { path: side === "lab" ? `/lab/requests/${r.id}` : `/client/requests/${r.id}`, label: "Open the request" },
  };
}

export function quoteReceivedLetter(q: {
  requestId: string;
  requestTitle: string;
  labName: string;
  totalMinor: number;
  currency: string;
  turnaroundDays: number;
  validUntil: Date;
}): Letter {
  return {
    subject: `${q.labName} sent a quote for “${formulaUnicode(q.requestTitle)}”`,
    heading: "A new quote",
    paragraphs: [`${q.labName} quoted on your request. Compare it with the other quotes side by side.`],
    facts: [
      ["Request", formulaUnicode(q.requestTitle)],
      ["Lab", q.labName],
      ["Total", formatMoney(q.totalMinor, q.currency)],
      ["Turnaround", `${q.turnaroundDays} days`],
      ["Valid until", day(q.validUntil)],
    ],
    nextStep: "Accept the quote that suits you; you pay when you accept.",
    link: { path: `/client/requests/${q.requestId}`, label: "Compare the quotes" },
  };
}

export function quoteDecisionLetter(
  accepted: boolean,
  q: {
    orderId: string;
    orderNumber: string;
    purchaseOrderNumber?: string | null;
    requestTitle: string;
    clientName: string;
    totalMinor: number;
    currency: string;
  },
): Letter {
  return accepted
    ? {
        subject: `Quote accepted: “${formulaUnicode(q.requestTitle)}” · order ${q.orderNumber}`,
        heading: "Your quote was accepted",
        paragraphs: [`${q.clientName} accepted your quote. The order waits for their payment; you will hear from us when the money is held.`],
        facts: [
          ["Request", formulaUnicode(q.requestTitle)],
          ["Client", q.clientName],
          ["Total", formatMoney(q.totalMinor, q.currency)],
          ["Order", q.orderNumber],
          ...(q.purchaseOrderNumber ? ([["Purchase order", q.purchaseOrderNumber]] as [string, string][]) : []),
        ],
        nextStep: "Nothing yet: start no work before the payment is held.",
        link: { path: `/lab/orders/${q.orderId}`, label: "Open the order" },
      }
    : {
        subject: `Another quote was chosen for “${formulaUnicode(q.requestTitle)}”`,
        heading: "Your quote was not chosen",
        paragraphs: [`${q.clientName} accepted another lab's quote for this request. Thank you for quoting.`],
        facts: [
          ["Request", formulaUnicode(q.requestTitle)],
          ["Your total", formatMoney(q.totalMinor, q.currency)],
        ],
        nextStep: "Nothing to do; new matching requests arrive in your inbox.",
        link: { path: "/lab/quotes", label: "See your quotes" },
      };
}

export function labApplicationLetter(l: { labId: string; labName: string; city: string | null; country: string | null }): Letter {
  return {
    subject: `Lab application to vet: ${l.labName}`,
    heading: "A lab applied for vetting",
    paragraphs: [`${l.labName} handed in its accreditation evidence, radiation-licence attestation and calibration scan.`],
    facts: [
      ["Lab", l.labName],
      ["Where", [l.city, l.country].filter(Boolean).join(", ") || "—"],
    ],
    nextStep: "Review the documents and the calibration check, then approve or decline.",
    link: { path: `/admin/labs/${l.labId}`, label: "Review the application" },
  };
}

export function labDecisionLetter(approved: boolean, l: { labName: string; note: string }): Letter {
  return {
    subject: approved ? `${l.labName} is approved on Diffractory` : `${l.labName}: application declined`,
    heading: approved ? "Your lab is approved" : "Your application was declined",
    paragraphs: [
      approved
        ? "Your lab now appears in the directory and receives matching requests."
        : "A Diffractory admin declined the application after reviewing the evidence.",
    ],
    facts: l.note ? [["Reviewer's note", l.note]] : [],
    nextStep: approved
      ? "Check your capabilities and price list; connect your payout account before quoting."
      : "Read the note, correct what it asks for and apply again.",
    link: { path: "/lab/vetting", label: "Open vetting" },
  };
}

/** An instrument left matching: its calibration scan is overdue, or its last one failed (docs/design.md#calibration-on-record). */
export function calibrationLapsedLetter(
  side: "lab" | "admin",
  c: { labId: string; labName: string; instrumentId: string; instrumentName: string; state: "overdue" | "out_of_control"; note: string },
): Letter {
  const what = c.state === "overdue" ? "calibration is overdue" : "calibration is out of control";
  return {
    subject: `${c.instrumentName} at ${c.labName}: ${what}`,
    heading: c.state === "overdue" ? "A calibration scan is overdue" : "A calibration scan failed",
    paragraphs: [
      `The ${what} for ${c.instrumentName} at ${c.labName}. Until a calibration scan of the standard passes, the instrument does not count for matching requests.`,
    ],
    facts: [["Lab", c.labName], ["Instrument", c.instrumentName], ...(c.note ? ([["Why", c.note]] as [string, string][]) : [])],
    nextStep:
      side === "lab"
        ? "Measure the certified standard on the instrument and upload the scan on its calibration page."
        : "The lab has been told; the instrument comes back once a calibration scan passes.",
    link:
      side === "lab"
        ? { path: `/lab/instruments/${c.instrumentId}/calibration`, label: "Open the calibration record" }
        : { path: `/admin/labs/${c.labId}`, label: "Open the lab" },
  };
}

export function invitationLetter(i: { token: string; organisationName: string; role: string; inviterName: string | null; expiresAt: Date }): Letter {
  const who = i.inviterName ? `${i.inviterName} invited you` : "You are invited";
  return {
    subject: `Invitation to join ${i.organisationName} on Diffractory`,
    heading: `Join ${i.organisationName}`,
    paragraphs: [`${who} to join ${i.organisationName} on Diffractory as ${i.role === "operator" || i.role === "owner" ? "an" : "a"} ${i.role}.`],
    facts: [
      ["Organisation", i.organisationName],
      ["Role", i.role],
      ["Link valid until", day(i.expiresAt)],
    ],
    nextStep: "Open the link, sign in or create an account with this e-mail address, then accept the invitation.",
    link: { path: `/invitations/${i.token}`, label: "Open the invitation" },
  };
}

export function passwordResetLetter(r: { token: string; expiresAt: Date }): Letter {
  const time = r.expiresAt.toLocaleTimeString("en-GB", { hour: "2-digit", minute: "2-digit", timeZone: "UTC" });
  return {
    subject: "Choose a new Diffractory password",
    heading: "Choose a new password",
    paragraphs: [
      "Someone — hopefully you — asked to reset the password of the Diffractory account with this e-mail address.",
      "If it was not you, ignore this message: your password stays as it is.",
    ],
    facts: [
      ["Link valid until", `${day(r.expiresAt)}, ${time} UTC`],
      ["Use", "once"],
    ],
    nextStep: "Open the link and choose a new password. Every device signed in to the account is signed out.",
    link: { path: `/reset-password/${r.token}`, label: "Choose a new password" },
  };
}

/** What happened to a standing agreement (docs/design.md#standing-agreements). */
export type AgreementEvent = "proposed" | "agreed" | "declined" | "notice" | "ended" | "lot_ordered";

export function agreementLetter(
  event: AgreementEvent,
  a: {
    id: string;
    number: string;
    material: string;
    clientName: string;
    labName: string;
    pricePerLotMinor: number;
    budgetCapMinor: number;
    currency: string;
    startsOn: string;
    endsOn: string;
    endingAt: Date | null;
    note: string;
  },
  side: "client" | "lab",
): Letter {
  const path = `/${side}/agreements/${a.id}`;
  const facts: [string, string][] = [
    ["Agreement", a.number],
    ["Material", a.material],
    ["Client", a.clientName],
    ["Lab", a.labName],
    ["Price per lot (net)", formatMoney(a.pricePerLotMinor, a.currency)],
    ["Budget cap (net)", formatMoney(a.budgetCapMinor, a.currency)],
    ["Period", `${a.startsOn} to ${a.endsOn}`],
  ];
  const words: Record<AgreementEvent, { subject: string; heading: string; paragraph: string; next: string }> = {
    proposed: {
      subject: `Standing agreement proposed: ${a.number}`,
      heading: "A standing agreement was proposed",
      paragraph: `${a.clientName} proposed a standing agreement for ${a.material}: each lot becomes an order at the price per lot, without a new quote.`,
      next: side === "lab" ? "Read the terms, then agree or decline." : "The lab agrees or declines; you will hear which.",
    },
    agreed: {
      subject: `Standing agreement agreed: ${a.number}`,
      heading: "The standing agreement is active",
      paragraph: `${a.labName} agreed to the standing agreement for ${a.material}.`,
      next: side === "client" ? "Order a lot on the agreement's page whenever one is ready." : "Lots ordered under it arrive as orders awaiting payment.",
    },
    declined: {
      subject: `Standing agreement declined: ${a.number}`,
      heading: "The standing agreement was declined",
      paragraph: `${a.labName} declined the proposed standing agreement for ${a.material}.`,
      next: "Nothing runs under it; requests and quotes work as before.",
    },
    notice: {
      subject: `Notice given on standing agreement ${a.number}`,
      heading: "Notice was given",
      paragraph: `Notice was given on the standing agreement for ${a.material}; it ends on ${a.endingAt ? day(a.endingAt) : a.endsOn}. Lots may still be ordered until then.`,
      next: "Orders already made go on as usual.",
    },
    ended: {
      subject: `Standing agreement ended: ${a.number}`,
      heading: "The standing agreement has ended",
      paragraph: `The standing agreement for ${a.material} has ended; no further lots can be ordered under it.`,
      next: "Orders already made go on as usual.",
    },
    lot_ordered: {
      subject: `Lot ordered under ${a.number}`,
      heading: "A lot was ordered under a standing agreement",
      paragraph: `${a.clientName} ordered a lot of ${a.material} under the standing agreement. The order waits for their payment.`,
      next: "Nothing yet: start no work before the payment is held.",
    },
  };
  const w = words[event];
  return {
    subject: w.subject,
    heading: w.heading,
    paragraphs: [w.paragraph],
    facts: a.note ? [...facts, [event === "lot_ordered" ? "Order" : "Note", a.note]] : facts,
    nextStep: w.next,
    link: { path, label: "Open the agreement" },
  };
}

/** A newly recorded lot breaks a control rule: which material, which lot, which parameter and rule, in words. */
export function lotRuleBrokenLetter(l: {
  productCode: string;
  name: string;
  lotCode: string;
  broken: { parameter: string; rules: string[] }[];
  path: string;
}): Letter {
  const what = l.broken.map((b) => `${b.parameter}: ${b.rules.join("; ")}`);
  return {
    subject: `Lot ${l.lotCode} of ${l.productCode} breaks a control rule`,
    heading: "A lot is out of control on the material's trend",
    paragraphs: [
      `The lattice check of lot ${l.lotCode} of ${formulaUnicode(l.name)} (${l.productCode}) gives a cell parameter that breaks a Western Electric rule against the control limits of the material's baseline lots.`,
      ...what,
    ],
    facts: [
      ["Material", `${l.productCode} — ${formulaUnicode(l.name)}`],
      ["Lot", l.lotCode],
      ["Parameter", l.broken.map((b) => b.parameter).join(", ")],
    ],
    nextStep: "Look at the trend chart and the lot's check, and decide whether the process has shifted.",
    link: { path: l.path, label: "Open the trend" },
  };
}
