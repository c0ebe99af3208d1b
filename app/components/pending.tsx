// Pending states: a submit button that says what it is doing while its form is on the way, and a thin bar at the
// top of the page (with a spoken "Loading") while any navigation or submission is in flight.
import { useEffect, useState, type ButtonHTMLAttributes, type ReactNode } from "react";
import { useNavigation } from "react-router";

export function Spinner({ className = "h-4 w-4" }: { className?: string }) {
  return (
    <svg viewBox="0 0 16 16" className={`${className} motion-safe:animate-spin`} aria-hidden="true" focusable="false">
      <circle cx="8" cy="8" r="6" fill="none" stroke="currentColor" strokeOpacity="0.3" strokeWidth="2" />
      <path d="M8 2a6 6 0 0 1 6 6" fill="none" stroke="currentColor" strokeWidth="2" strokeLinecap="round" />
    </svg>
  );
}

/**
 * A submit button that is disabled while any form of the page is submitting and, when its own submission is the
 * one in flight, shows a spinner and `pendingText`. Its own: the submitted form data holds every field of `match`
 * (the form's hidden intent and id), the button's own name and value, and the form's `action` path when given
 * (header forms: sign-out, switch organisation); with none of them, any submission counts.
 */
export function SubmitButton({
  children,
  pendingText,
  className = "btn-primary",
  name,
  value,
  match,
  action,
  ...rest
}: { children: ReactNode; pendingText?: ReactNode; match?: Record<string, string>; action?: string } & Omit<
  ButtonHTMLAttributes<HTMLButtonElement>,
  "type" | "children"
>) {
  const navigation = useNavigation();
  // A form submission of any method (a GET filter form too); plain link navigations leave the buttons alone.
  const busy = navigation.state !== "idle" && navigation.formMethod !== undefined;
  const fields = { ...match, ...(name === undefined ? {} : { [name]: String(value) }) };
  const toAction = action === undefined || navigation.formAction?.split("?")[0] === action;
  const mine = busy && toAction && Object.entries(fields).every(([k, v]) => navigation.formData?.get(k) === v);
  return (
    <button {...rest} type="submit" name={name} value={value} className={className} disabled={busy || rest.disabled} aria-busy={mine || undefined}>
      {mine ? <Spinner /> : null}
      {mine && pendingText ? pendingText : children}
    </button>
  );
}

/** A bar across the top of the page while the next screen loads or a form is sent; quick ones (<150 ms) show nothing. */
export function NavigationProgress() {
  const navigation = useNavigation();
  const active = navigation.state !== "idle";
  const [shown, setShown] = useState(false);
  useEffect(() => {
    if (!active) {
      setShown(false);
      return;
    }
    const t = setTimeout(() => setShown(true), 150);
    return () => clearTimeout(t);
  }, [active]);
  return (
    <>
      <div
        aria-hidden="true"
        className={`pointer-events-none fixed inset-x-0 top-0 z-50 h-1 origin-left bg-beam-500 transition-transform duration-700 ease-out ${shown ? "scale-x-75" : "scale-x-0 opacity-0"}`}
      />
      {/* A live region without the status role: the page's toasts and counts are the page's "status". */}
      <p className="sr-only" aria-live="polite">
        {shown ? (navigation.state === "submitting" ? "Sending…" : "Loading…") : ""}
      </p>
    </>
  );
}
