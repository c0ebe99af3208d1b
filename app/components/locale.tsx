// The viewer's formatters for every screen: the root layout provides the locale from its loader data, so the
// server's render and the browser's hydration produce the same text.
import { createContext, useContext, type ReactNode } from "react";
import { DEFAULT_LOCALE, formatterFor, type Formatter, type SupportedLocale } from "~/domain/locale";

const LocaleContext = createContext<SupportedLocale>(DEFAULT_LOCALE);

export function LocaleProvider({ locale, children }: { locale: SupportedLocale; children: ReactNode }) {
  return <LocaleContext.Provider value={locale}>{children}</LocaleContext.Provider>;
}

/** Money, dates and counts in the viewer's locale; times in UTC. */
export function useFormat(): Formatter {
  return formatterFor(useContext(LocaleContext));
}
