// A labelled select bound to a conform field, with its error slot.
import { getSelectProps } from "@conform-to/react";
import { Field } from "./ui";

type SelectMeta = Parameters<typeof getSelectProps>[0];

export function SelectField({
  label,
  meta,
  options,
  className = "input",
}: {
  label: string;
  meta: SelectMeta;
  options: readonly { value: string; label: string }[];
  className?: string;
}) {
  return (
    <Field label={label} id={meta.id} errors={meta.errors}>
      <select className={className} {...getSelectProps(meta)}>
        {options.map((o) => (
          <option key={o.value} value={o.value}>
            {o.label}
          </option>
        ))}
      </select>
    </Field>
  );
}
