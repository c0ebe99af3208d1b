// Connected (Express) payout accounts, their onboarding links, transfers to them and the balances.
import { type Body, bool, currencyOf, formatAmount, invalid, metadataOf, noSuch, now, paramError, positiveInt, requireStr, str } from "./api";
import { type Ctx, balanceTransaction } from "./payments";
import type { ProviderObject } from "./state";

const CURRENCY_BY_COUNTRY: Record<string, string> = {
  US: "usd",
  GB: "gbp",
  CH: "chf",
  SE: "sek",
  DK: "dkk",
  NO: "nok",
  PL: "pln",
  CZ: "czk",
  JP: "jpy",
  CA: "cad",
  AU: "aud",
};
const DUE_BEFORE_ONBOARDING = ["business_type", "external_account", "tos_acceptance.date", "tos_acceptance.ip"];
const LINK_LIFETIME_S = 300;

function requirements(due: string[]) {
  return {
    alternatives: [],
    current_deadline: null,
    currently_due: due,
    disabled_reason: due.length ? "requirements.past_due" : null,
    errors: [],
    eventually_due: due,
    past_due: due,
    pending_verification: [],
  };
}

export function createAccount(ctx: Ctx, body: Body) {
  const type = str(body, "type") ?? "express";
  if (!["express", "standard", "custom"].includes(type)) throw paramError("type", `Invalid type: must be one of express, standard, custom`);
  const country = (str(body, "country") ?? "DE").toUpperCase();
  const requested = (body.capabilities ?? {}) as Record<string, Body>;
  const capabilities = Object.fromEntries(
    Object.entries(requested)
      .filter(([, v]) => bool(v?.requested))
      .map(([k]) => [k, "inactive"]),
  );
  return ctx.state.put({
    id: ctx.state.newId("acct"),
    object: "account",
    business_profile: { mcc: null, name: null, url: null, support_email: null },
    business_type: null,
    capabilities,
    charges_enabled: false,
    controller: { type: "application", is_controller: true },
    country,
    created: now(),
    default_currency: CURRENCY_BY_COUNTRY[country] ?? "eur",
    details_submitted: false,
    email: str(body, "email"),
    external_accounts: { object: "list", data: [], has_more: false, total_count: 0, url: "" },
    future_requirements: requirements([]),
    metadata: metadataOf(body),
    payouts_enabled: false,
    requirements: requirements(DUE_BEFORE_ONBOARDING),
    settings: null,
    tos_acceptance: { date: null },
    type,
  });
}

export function accountOrThrow(ctx: Ctx, id: string, param = "account") {
  const a = ctx.state.get(id, "account");
  if (!a) throw noSuch("account", id, param);
  return a;
}

export function updateAccount(ctx: Ctx, id: string, body: Body) {
  const a = accountOrThrow(ctx, id);
  if (body.email !== undefined) a.email = str(body, "email");
  if (body.metadata !== undefined) a.metadata = { ...(a.metadata as object), ...metadataOf(body) };
  ctx.state.put(a);
  ctx.hooks.emit("account.updated", a, { account: a.id });
  return a;
}

interface LinkRecord {
  account: string;
  refresh_url: string;
  return_url: string;
  expires_at: number;
  used: boolean;
}

export function createAccountLink(ctx: Ctx, body: Body) {
  const account = requireStr(body, "account");
  accountOrThrow(ctx, account);
  const type = requireStr(body, "type");
  if (type !== "account_onboarding" && type !== "account_update") throw paramError("type", "Invalid type: must be one of account_onboarding, account_update");
  const record: LinkRecord = {
    account,
    refresh_url: requireStr(body, "refresh_url"),
    return_url: requireStr(body, "return_url"),
    expires_at: now() + LINK_LIFETIME_S,
    used: false,
  };
  const token = ctx.state.newId("onb");
  ctx.state.setInternal(`link:${token}`, record);
  return { object: "account_link", created: now(), expires_at: record.expires_at, url: `${ctx.baseUrl()}/connect/onboard/${token}` };
}

export type LinkState = { kind: "unknown" } | { kind: "stale"; link: LinkRecord } | { kind: "valid"; link: LinkRecord; account: ProviderObject };

export function onboardingLink(ctx: Ctx, token: string): LinkState {
  const link = ctx.state.getInternal<LinkRecord>(`link:${token}`);
  if (!link) return { kind: "unknown" };
  const account = ctx.state.get(link.account, "account");
  if (!account || link.used || link.expires_at <= now()) return { kind: "stale", link };
  return { kind: "valid", link, account };
}

/** Marks a link used; with `complete`, the account becomes able to receive transfers and payouts. */
export function finishOnboarding(ctx: Ctx, token: string, complete: boolean) {
  const st = onboardingLink(ctx, token);
  if (st.kind !== "valid") return st;
  st.link.used = true;
  ctx.state.setInternal(`link:${token}`, st.link);
  if (complete) completeOnboarding(ctx, st.account);
  return st;
}

export function completeOnboarding(ctx: Ctx, account: ProviderObject) {
  if (account.details_submitted && account.payouts_enabled) return account;
  const previous = {
    charges_enabled: account.charges_enabled,
    payouts_enabled: account.payouts_enabled,
    details_submitted: account.details_submitted,
    capabilities: structuredClone(account.capabilities),
    requirements: structuredClone(account.requirements),
  };
  const caps = (account.capabilities ?? {}) as Record<string, string>;
  if (!caps.transfers) caps.transfers = "inactive";
  Object.assign(account, {
    charges_enabled: true,
    payouts_enabled: true,
    details_submitted: true,
    business_type: "individual",
    capabilities: Object.fromEntries(Object.keys(caps).map((k) => [k, "active"])),
    requirements: requirements([]),
    tos_acceptance: { date: now(), ip: "127.0.0.1", user_agent: null },
  });
  ctx.state.put(account);
  ctx.hooks.emit("account.updated", account, { previous, account: account.id });
  return account;
}

/** Available funds by currency: the platform's from its balance transactions, an account's from transfers in. */
export function balances(ctx: Ctx, account: string | null) {
  const by = new Map<string, number>();
  const add = (c: string, n: number) => by.set(c, (by.get(c) ?? 0) + n);
  if (account === null) {
    for (const t of ctx.state.list("balance_transaction")) add(String(t.currency), Number(t.net));
  } else {
    for (const t of ctx.state.list("transfer")) if (t.destination === account) add(String(t.currency), Number(t.amount) - Number(t.amount_reversed));
  }
  return by;
}

export function balanceObject(ctx: Ctx, account: string | null) {
  const by = balances(ctx, account);
  if (by.size === 0) by.set("eur", 0);
  const entries = [...by];
  return {
    object: "balance",
    livemode: false,
    available: entries.map(([currency, amount]) => ({ amount, currency, source_types: { card: amount } })),
    pending: entries.map(([currency]) => ({ amount: 0, currency, source_types: { card: 0 } })),
    connect_reserved: entries.map(([currency]) => ({ amount: 0, currency })),
  };
}

export function createTransfer(ctx: Ctx, body: Body) {
  const amount = positiveInt(body.amount, "amount");
  const currency = currencyOf(body.currency);
  const destinationId = requireStr(body, "destination");
  const destination = ctx.state.get(destinationId, "account");
  if (!destination) throw invalid(`No such destination: '${destinationId}'`, { param: "destination", code: "resource_missing" });
  const caps = (destination.capabilities ?? {}) as Record<string, string>;
  if (!destination.payouts_enabled || caps.transfers !== "active") {
    throw invalid("Your destination account needs to have at least one of the following capabilities enabled: transfers, crypto_transfers, legacy_payments", {
      param: "destination",
      code: "insufficient_capabilities_for_transfer",
    });
  }
  let transferGroup = str(body, "transfer_group");
  const sourceId = str(body, "source_transaction");
  if (sourceId) {
    const source = ctx.state.get(sourceId, "charge");
    if (!source || source.status !== "succeeded") throw invalid(`No such charge: '${sourceId}'`, { param: "source_transaction", code: "resource_missing" });
    if (source.currency !== currency)
      throw invalid(`The currency of source_transaction's balance transaction (${source.currency}) must be the same as the transfer currency (${currency})`, {
        param: "currency",
      });
    const used = ctx.state
      .list("transfer")
      .filter((t) => t.source_transaction === sourceId)
      .reduce((s, t) => s + Number(t.amount), 0);
    const left = Number(source.amount) - Number(source.amount_refunded) - used;
    if (amount > left) {
      throw invalid(
        `Transfer amount (${formatAmount(amount, currency)}) exceeds what is left of source_transaction ${sourceId} (${formatAmount(left, currency)}).`,
        { param: "amount" },
      );
    }
    transferGroup ??= (source.transfer_group as string | null) ?? null;
  }
  const available = balances(ctx, null).get(currency) ?? 0;
  if (amount > available) {
    throw invalid(
      `You have insufficient available funds in your balance for this transfer: ${formatAmount(available, currency)} available, ${formatAmount(amount, currency)} requested.`,
      { code: "balance_insufficient" },
    );
  }
  const id = ctx.state.newId("tr");
  const transfer = ctx.state.put({
    id,
    object: "transfer",
    amount,
    amount_reversed: 0,
    balance_transaction: balanceTransaction(ctx, "transfer", -amount, currency, id, str(body, "description")),
    created: now(),
    currency,
    description: str(body, "description"),
    destination: destinationId,
    destination_payment: ctx.state.newId("py"),
    livemode: false,
    metadata: metadataOf(body),
    reversals: { object: "list", data: [], has_more: false, total_count: 0, url: `/v1/transfers/${id}/reversals` },
    reversed: false,
    source_transaction: sourceId,
    source_type: "card",
    transfer_group: transferGroup,
  });
  ctx.hooks.emit("transfer.created", transfer);
  return transfer;
}
