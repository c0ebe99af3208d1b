// Price tiers by client kind (docs/design.md#price-tiers): a lab may charge academic, non-profit and industry clients
// their own per-sample and per-hour prices; whatever a tier leaves out comes from the base list. A quote drafts from a
// tier only when an admin has confirmed the client's stated kind; an unconfirmed or unstated kind gets the base list.
import type { PriceTier } from "~/db/schema";
import { CLIENT_KIND_LABELS, CLIENT_KINDS, type ClientKind } from "~/domain/profile-forms";

export type PriceTiers = Partial<Record<ClientKind, PriceTier>>;

/** The prices a tier can change, as the base list has them. */
export interface TierableList {
  perSampleMinor: Partial<Record<string, number>>;
  perInstrumentHourMinor?: number;
  tiers?: PriceTiers | null;
}

/** The client as far as pricing goes: the kind it states and when (if ever) an admin confirmed it. */
export interface ClientStanding {
  clientKind: string | null;
  clientKindConfirmedAt: Date | string | null;
}

export type TierChoice = {
  /** The tier used, or null for the base list. */
  tier: ClientKind | null;
  /** The kind the client states, if one of the known kinds. */
  statedKind: ClientKind | null;
  confirmed: boolean;
  /** One sentence for the lab: which prices the draft uses and why. */
  note: string;
};

const isKind = (k: string | null | undefined): k is ClientKind => !!k && (CLIENT_KINDS as readonly string[]).includes(k);
const kindWord = (k: ClientKind) => CLIENT_KIND_LABELS[k].toLowerCase();

/** True when the tier sets at least one price. */
export function tierHasPrices(tier: PriceTier | undefined | null): tier is PriceTier {
  if (!tier) return false;
  return tier.perInstrumentHourMinor !== undefined || Object.values(tier.perSampleMinor ?? {}).some((v) => v !== undefined);
}

/** Which prices apply to this client: its confirmed kind's tier when the lab has one, else the base list. */
export function chooseTier(list: TierableList | null, client: ClientStanding | null): TierChoice {
  const statedKind = isKind(client?.clientKind) ? client.clientKind : null;
  const confirmed = statedKind !== null && Boolean(client?.clientKindConfirmedAt);
  if (!statedKind) return { tier: null, statedKind, confirmed, note: "Base prices: the client has not stated whether it is academic, non-profit or industry." };
  if (!confirmed) {
    return {
      tier: null,
      statedKind,
      confirmed,
      note: `Base prices: the client states it is ${kindWord(statedKind)}, but Diffractory has not confirmed that yet.`,
    };
  }
  if (!list || !tierHasPrices(list.tiers?.[statedKind])) {
    return {
      tier: null,
      statedKind,
      confirmed,
      note: `Base prices: the client is confirmed as ${kindWord(statedKind)}, and you set no ${kindWord(statedKind)} prices.`,
    };
  }
  return { tier: statedKind, statedKind, confirmed, note: `Your ${kindWord(statedKind)} prices: the client is confirmed as ${kindWord(statedKind)}.` };
}

/** The list with the tier's prices laid over the base ones (a technique the base list does not offer stays unoffered). */
export function applyTier<L extends TierableList>(list: L, tier: ClientKind | null): L {
  const t = tier ? list.tiers?.[tier] : undefined;
  if (!t) return list;
  const perSampleMinor: Partial<Record<string, number>> = { ...list.perSampleMinor };
  for (const [technique, minor] of Object.entries(t.perSampleMinor ?? {})) {
    if (minor !== undefined && list.perSampleMinor[technique] !== undefined) perSampleMinor[technique] = minor;
  }
  return { ...list, perSampleMinor, perInstrumentHourMinor: t.perInstrumentHourMinor ?? list.perInstrumentHourMinor };
}

/** Both steps at once: the prices for this client and the choice that explains them. */
export function pricesForClient<L extends TierableList>(list: L | null, client: ClientStanding | null): { prices: L | null; choice: TierChoice } {
  const choice = chooseTier(list, client);
  return { prices: list ? applyTier(list, choice.tier) : null, choice };
}

/** The tiers a lab set, in the fixed order, for showing: only those with at least one price. */
export function tiersToShow(tiers: PriceTiers | null | undefined): { kind: ClientKind; label: string; tier: PriceTier }[] {
  return CLIENT_KINDS.flatMap((kind) => {
    const tier = tiers?.[kind];
    return tierHasPrices(tier) ? [{ kind, label: CLIENT_KIND_LABELS[kind], tier }] : [];
  });
}
