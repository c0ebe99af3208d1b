// The Content-Security-Policy nonce of the response being rendered, for React Router's inline scripts.
// On the server entry.server.tsx provides it; in the browser it is empty (the scripts have already run).
import { createContext, useContext } from "react";

export const NonceContext = createContext<string>("");
export const NonceProvider = NonceContext.Provider;
export const useNonce = () => useContext(NonceContext);
