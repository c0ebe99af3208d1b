// The narrow card of the sign-in family of screens (sign in, code, forgot and reset password), with an
// optional "Question? Link" line under the form.
import type { ReactNode } from "react";
import { Link } from "react-router";

export function AuthCard({
  title,
  intro,
  children,
  footer,
}: {
  title: string;
  intro?: ReactNode;
  children: ReactNode;
  footer?: { question: string; to: string; label: string };
}) {
  return (
    <div className="mx-auto max-w-md px-4 py-16">
      <div className="card">
        <h1 className="text-2xl font-bold">{title}</h1>
        {intro ? <p className="mt-1 text-sm text-ink-600">{intro}</p> : null}
        {children}
        {footer ? (
          <p className="mt-6 text-center text-sm text-ink-600">
            {footer.question}{" "}
            <Link to={footer.to} className="font-semibold text-beam-700 underline">
              {footer.label}
            </Link>
          </p>
        ) : null}
      </div>
    </div>
  );
}
