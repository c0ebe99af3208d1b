// The Content-Security-Policy nonce of the response being rendered, for React Router's inline scripts.
// On the server entry.server.tsx provides it. In the browser it is read back from the page's scripts
// (the nonce property; browsers blank the attribute), so hydration renders the same value as the server.
import { createContext, useContext } from "react";

const pageNonce = () => (typeof document === "undefined" ? "" : (document.querySelector<HTMLScriptElement>("script[nonce]")?.nonce ?? ""));

export const NonceContext = createContext<string>(pageNonce());
export const NonceProvider = NonceContext.Provider;
export const useNonce = () => useContext(NonceContext);
