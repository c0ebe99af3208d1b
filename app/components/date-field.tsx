// Diffractory's own date field: a text box that shows and takes a day in the viewer's locale (30/06/2099 in
// Britain, 06/30/2099 in the United States, 30.06.2099 in Germany) — a native date input follows the browser's
// interface language instead of the page's locale. The form sends the day as ISO YYYY-MM-DD in a hidden input
// under the field's name, so every action reads what it always read. ISO typed as such is understood too.
import { useEffect, useRef, useState } from "react";
import { dayPatternOf, isoDayInLocale, parseLocaleDay } from "~/domain/locale";
import { useFormat } from "./locale";

export function DateField({
  id,
  name,
  defaultValue,
  required,
  className = "input",
  form,
  "aria-describedby": describedBy,
  "aria-invalid": invalid,
}: {
  id: string;
  name: string;
  /** ISO YYYY-MM-DD (or nothing). */
  defaultValue?: string | null | readonly string[] | number;
  required?: boolean;
  className?: string;
  form?: string;
  "aria-describedby"?: string;
  "aria-invalid"?: boolean | "true" | "false";
}) {
  const { locale } = useFormat();
  const { pattern, example } = dayPatternOf(locale);
  const initial = typeof defaultValue === "string" ? defaultValue : "";
  const [sent, setSent] = useState(initial);
  const [problem, setProblem] = useState(false);
  const box = useRef<HTMLInputElement>(null);
  const patternId = `${id}-pattern`;

  /** What the form sends: the ISO day, or the words as typed so the server's own sentence refuses them. */
  const read = (text: string) => {
    const t = text.trim();
    setSent(t ? (parseLocaleDay(t, locale) ?? t) : "");
    return t === "" || parseLocaleDay(t, locale) !== null;
  };
  // A day typed before the page came alive (no change event reached React) is read once on hydration.
  // biome-ignore lint/correctness/useExhaustiveDependencies: once, on hydration
  useEffect(() => {
    if (box.current && box.current.value !== isoDayInLocale(initial, locale)) read(box.current.value);
  }, []);

  return (
    <>
      <input
        ref={box}
        id={id}
        type="text"
        inputMode="numeric"
        autoComplete="off"
        className={className}
        defaultValue={isoDayInLocale(initial, locale)}
        placeholder={pattern}
        required={required}
        aria-invalid={problem || invalid === true || invalid === "true" ? true : undefined}
        aria-describedby={[patternId, describedBy].filter(Boolean).join(" ")}
        onChange={(e) => {
          if (read(e.currentTarget.value)) setProblem(false);
        }}
        onBlur={(e) => setProblem(!read(e.currentTarget.value))}
      />
      <input type="hidden" name={name} value={sent} form={form} />
      <span id={patternId} className={problem ? "mt-1 block text-xs text-danger-700" : "sr-only"} data-date-pattern={pattern}>
        {problem ? `Write the day as ${pattern}, for example ${example}.` : `Written ${pattern}`}
      </span>
    </>
  );
}
