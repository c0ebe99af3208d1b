// The rules every new password follows: at account creation, after a reset link, and on the security screen.
import { z } from "zod";

export const PASSWORD_MIN = 12;
export const PASSWORD_MAX = 200;

export const newPasswordField = () =>
  z
    .string({ error: "Choose a password." })
    .min(PASSWORD_MIN, `Use at least ${PASSWORD_MIN} characters.`)
    .max(PASSWORD_MAX, `A password has at most ${PASSWORD_MAX} characters.`);

/** A password being checked, not chosen: only its length is limited (hashing 1 MB is not free). */
export const currentPasswordField = (what = "your current password") =>
  z.string({ error: `Enter ${what}.` }).max(PASSWORD_MAX, `A password has at most ${PASSWORD_MAX} characters.`);

/** A new password typed twice; the second must match the first. */
export const newPasswordPair = <T extends z.ZodRawShape>(extra: T) =>
  z
    .object({ ...extra, password: newPasswordField(), confirm: z.string({ error: "Enter the new password again." }).max(PASSWORD_MAX) })
    .refine((v) => (v as { password: string }).password === (v as { confirm: string }).confirm, {
      path: ["confirm"],
      message: "The two passwords are not the same.",
    });
