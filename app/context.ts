// What the Express server hands every loader and action besides the request.
import "react-router";

declare module "react-router" {
  interface AppLoadContext {
    /** The caller's address as the server saw it (used for sign-in limits and the audit log). */
    clientAddress: string;
    /** This response's Content-Security-Policy nonce (server/app.ts); absent outside the HTTP server. */
    cspNonce?: string;
  }
}
