// Prints the demo admin's current sign-in code (and the next one), computed from the published demo key.
import { DEMO_ADMIN_TOTP_SECRET } from "~/demo/demo-secrets";
import { timeStep, totpCodeAt, TOTP_PERIOD } from "~/models/accounts/totp.server";

const step = timeStep();
const left = TOTP_PERIOD - (Math.floor(Date.now() / 1000) % TOTP_PERIOD);
console.log(
  `admin@diffractory.example code: ${totpCodeAt(DEMO_ADMIN_TOTP_SECRET, step)} (${left} s left), next: ${totpCodeAt(DEMO_ADMIN_TOTP_SECRET, step + 1)}`,
);
