// The two fields of a new password (typed twice), for the reset screen and the account security screen.
import { getInputProps, type FieldMetadata } from "@conform-to/react";
import { Field } from "./ui";

export function NewPasswordFields({ password, confirm }: { password: FieldMetadata<string>; confirm: FieldMetadata<string> }) {
  return (
    <>
      <Field label="New password" id={password.id} errors={password.errors} hint="At least 12 characters.">
        <input className="input" autoComplete="new-password" {...getInputProps(password, { type: "password" })} />
      </Field>
      <Field label="New password again" id={confirm.id} errors={confirm.errors}>
        <input className="input" autoComplete="new-password" {...getInputProps(confirm, { type: "password" })} />
      </Field>
    </>
  );
}
