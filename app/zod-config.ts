// Zod in the browser without its `new Function` probe. Zod 4 checks, when a z.object() is built, whether it may
// compile a faster parser with `new Function`; the Content-Security-Policy allows no 'unsafe-eval'
// (docs/decisions/006-content-security-policy.md), so the browser refuses it and reports a
// `securitypolicyviolation` even though Zod catches the refusal. Jitless mode never probes. root.tsx imports this
// module first, so it runs before any schema module is evaluated; the server keeps Zod's default.
import { config } from "zod";

if (typeof document !== "undefined") config({ jitless: true });
