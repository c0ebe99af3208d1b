// What a refused second-factor code is told, shared by the server checks and the forms' own validation.
export type TotpRefusal = "malformed" | "wrong" | "replayed";

export const TOTP_MESSAGES: Record<TotpRefusal, string> = {
  malformed: "Enter the 6-digit code from your authenticator app.",
  wrong: "That code is not right. Check the clock of the device and try the current code.",
  replayed: "That code was already used. Wait for the next code and enter it.",
};
