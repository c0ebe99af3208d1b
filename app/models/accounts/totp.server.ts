// Time-based one-time passwords (RFC 6238: HMAC-SHA-1, 6 digits, 30-second steps) through the otpauth package,
// and the enrolment QR code rendered on the server (qrcode) so no script is needed to show it.
import * as OTPAuth from "otpauth";
import QRCode from "qrcode";
import type { TotpRefusal } from "~/domain/totp-messages";

export const TOTP_PERIOD = 30;
export const TOTP_DIGITS = 6;
/** Codes of one step before and after the server's clock are accepted (RFC 6238 §5.2 allows a small window). */
export const TOTP_WINDOW = 1;
const ISSUER = "Diffractory";

function totp(secretBase32: string, label = "account") {
  return new OTPAuth.TOTP({
    issuer: ISSUER,
    label,
    algorithm: "SHA1",
    digits: TOTP_DIGITS,
    period: TOTP_PERIOD,
    secret: OTPAuth.Secret.fromBase32(secretBase32),
  });
}

/** A fresh 160-bit secret in base32, the length RFC 4226 recommends. */
export function newTotpSecret() {
  return new OTPAuth.Secret({ size: 20 }).base32;
}

/** The time step a moment falls in. */
export const timeStep = (nowMs = Date.now()) => OTPAuth.TOTP.counter({ period: TOTP_PERIOD, timestamp: nowMs });

/** The code of a given step (tests and the demo's helpers compute codes this way). */
export function totpCodeAt(secretBase32: string, step: number) {
  return totp(secretBase32).generate({ timestamp: step * TOTP_PERIOD * 1000 });
}

export type TotpCheck = { ok: true; step: number } | { ok: false; reason: TotpRefusal };

export const normaliseCode = (code: string) => code.replace(/[\s-]/g, "");

/**
 * Checks a code against the secret within ±1 step of `nowMs`. A code of a step at or before `lastStep`
 * (the last one accepted) is refused even when it is right: each step's code is good once (RFC 6238 §5.2).
 */
export function checkTotpCode(secretBase32: string, code: string, lastStep: number | null, nowMs = Date.now()): TotpCheck {
  const token = normaliseCode(code);
  if (!new RegExp(`^\\d{${TOTP_DIGITS}}$`).test(token)) return { ok: false, reason: "malformed" };
  const delta = totp(secretBase32).validate({ token, timestamp: nowMs, window: TOTP_WINDOW });
  if (delta === null) return { ok: false, reason: "wrong" };
  const step = timeStep(nowMs) + delta;
  if (lastStep !== null && step <= lastStep) return { ok: false, reason: "replayed" };
  return { ok: true, step };
}

export { TOTP_MESSAGES } from "~/domain/totp-messages";

/** The otpauth:// URI an authenticator app reads, and the same as a QR code in an SVG data URL. */
export async function enrolmentPicture(secretBase32: string, email: string) {
  const uri = totp(secretBase32, email).toString();
  const svg = await QRCode.toString(uri, { type: "svg", errorCorrectionLevel: "M", margin: 2, color: { dark: "#0f172a", light: "#ffffff" } });
  return { uri, dataUrl: `data:image/svg+xml;base64,${Buffer.from(svg).toString("base64")}` };
}

/** The secret in groups of four, easier to type into an app by hand. */
export const groupedSecret = (secretBase32: string) => secretBase32.replace(/(.{4})(?=.)/g, "$1 ");
