// The 6-digit authenticator code field of the sign-in code screen and the second-factor forms.
import { getInputProps, type FieldMetadata } from "@conform-to/react";
import { Field } from "./ui";

export function TotpCodeField({
  field,
  label = "Code from the app",
  autoFocus = false,
}: {
  field: FieldMetadata<string>;
  label?: string;
  autoFocus?: boolean;
}) {
  return (
    <Field label={label} id={field.id} errors={field.errors}>
      <input
        className="input w-40 font-mono tracking-widest"
        inputMode="numeric"
        autoComplete="one-time-code"
        maxLength={8}
        // biome-ignore lint/a11y/noAutofocus: only the second-factor page asks for it, where typing the code is the one thing to do
        autoFocus={autoFocus}
        {...getInputProps(field, { type: "text" })}
      />
    </Field>
  );
}
