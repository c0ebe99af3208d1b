// The demo's published secrets (README, demo accounts): invented, for the local demo only, never for a real deployment.

/** Every demo account's password. */
export const DEMO_PASSWORD = "diffractory-demo";

/**
 * The demo admin's TOTP key (base32, RFC 6238: SHA-1, 6 digits, 30 s). Add it to an authenticator app, or
 * print the current code with `npx tsx scripts/demo-code.ts`.
 */
export const DEMO_ADMIN_TOTP_SECRET = "DIFFRACTORYDEMOADMINTOTPKEY23456";
