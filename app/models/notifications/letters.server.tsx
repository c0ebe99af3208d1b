// E-mail bodies rendered on the server from React: one letter shape, an HTML and a plain-text version.
import type { ReactNode } from "react";
import { renderToStaticMarkup } from "react-dom/server";
import { config } from "~/config.server";

/** What every milestone message says, whatever its kind. */
export interface Letter {
  subject: string;
  heading: string;
  paragraphs: string[];
  /** Label and value pairs: the order, the amount, the carrier… */
  facts: [string, string][];
  /** An optional small table, e.g. each sample's check verdict. */
  table?: { caption: string; columns: string[]; rows: string[][] };
  nextStep: string;
  /** A path inside the app; the absolute link is made from the configured public origin. */
  link: { path: string; label: string };
}

export interface RenderedLetter {
  subject: string;
  html: string;
  text: string;
}

const absolute = (path: string) => new URL(path, config.appUrl).toString();

const FONT = "'DM Sans', Helvetica, Arial, sans-serif";

function LetterHtml({ letter, name }: { letter: Letter; name: string }) {
  const href = absolute(letter.link.path);
  return (
    <html lang="en">
      <head>
        <meta charSet="utf-8" />
        <title>{letter.subject}</title>
      </head>
      <body style={{ margin: 0, padding: "24px", background: "#f5f6f8", color: "#1f2430" }}>
        <table
          role="presentation"
          width="100%"
          cellPadding={0}
          cellSpacing={0}
          style={{ maxWidth: "560px", margin: "0 auto", background: "#ffffff", borderRadius: "8px" }}
        >
          <tbody>
            <tr>
              <td style={{ padding: "24px 28px", fontSize: "15px", lineHeight: "1.55", fontFamily: FONT }}>
                <p style={{ margin: "0 0 16px", fontSize: "13px", fontWeight: 700, letterSpacing: "0.06em", color: "#3559a8" }}>DIFFRACTORY</p>
                <h1 style={{ margin: "0 0 16px", fontSize: "20px" }}>{letter.heading}</h1>
                <p style={{ margin: "0 0 12px" }}>Hello {name},</p>
                {letter.paragraphs.map((p, i) => (
                  <p key={i} style={{ margin: "0 0 12px" }}>
                    {p}
                  </p>
                ))}
                {letter.facts.length ? (
                  <table role="presentation" cellPadding={0} cellSpacing={0} style={{ margin: "8px 0 16px", fontSize: "14px" }}>
                    <tbody>
                      {letter.facts.map(([k, v]) => (
                        <tr key={k}>
                          <td style={{ padding: "2px 16px 2px 0", color: "#5b6372" }}>{k}</td>
                          <td style={{ padding: "2px 0", fontWeight: 600 }}>{v}</td>
                        </tr>
                      ))}
                    </tbody>
                  </table>
                ) : null}
                {letter.table ? <LetterTable table={letter.table} /> : null}
                <p style={{ margin: "16px 0 8px" }}>
                  <strong>Next step: </strong>
                  {letter.nextStep}
                </p>
                <p style={{ margin: "20px 0" }}>
                  <a
                    href={href}
                    style={{
                      display: "inline-block",
                      padding: "10px 18px",
                      background: "#3559a8",
                      color: "#ffffff",
                      borderRadius: "6px",
                      textDecoration: "none",
                      fontWeight: 600,
                    }}
                  >
                    {letter.link.label}
                  </a>
                </p>
                <p style={{ margin: "24px 0 0", fontSize: "12px", color: "#5b6372" }}>
                  You receive this because you belong to an organisation on Diffractory. Messages that are not about payments, disputes or safety can be turned
                  off at {absolute("/account/notifications")}.
                </p>
              </td>
            </tr>
          </tbody>
        </table>
      </body>
    </html>
  );
}

function LetterTable({ table }: { table: NonNullable<Letter["table"]> }) {
  return (
    <table cellPadding={0} cellSpacing={0} style={{ margin: "8px 0 16px", fontSize: "14px", borderCollapse: "collapse", width: "100%" }}>
      <caption style={{ textAlign: "left", fontWeight: 600, paddingBottom: "4px" }}>{table.caption}</caption>
      <thead>
        <tr>
          {table.columns.map((c) => (
            <th key={c} style={{ textAlign: "left", borderBottom: "1px solid #d7dbe2", padding: "4px 8px 4px 0" }}>
              {c}
            </th>
          ))}
        </tr>
      </thead>
      <tbody>
        {table.rows.map((r, i) => (
          <tr key={i}>
            {r.map((cell, j) => (
              <td key={j} style={{ borderBottom: "1px solid #eceff3", padding: "4px 8px 4px 0" }}>
                {cell}
              </td>
            ))}
          </tr>
        ))}
      </tbody>
    </table>
  );
}

/** The plain-text twin: the same content, one line per fact, rendered by React and un-escaped. */
function LetterText({ letter, name }: { letter: Letter; name: string }) {
  const lines: ReactNode[] = [letter.heading, "", `Hello ${name},`, ""];
  for (const p of letter.paragraphs) lines.push(p, "");
  for (const [k, v] of letter.facts) lines.push(`${k}: ${v}`);
  if (letter.facts.length) lines.push("");
  if (letter.table) {
    lines.push(letter.table.caption);
    for (const r of letter.table.rows) lines.push(`- ${r.join(" — ")}`);
    lines.push("");
  }
  lines.push(
    `Next step: ${letter.nextStep}`,
    "",
    `${letter.link.label}: ${absolute(letter.link.path)}`,
    "",
    "—",
    "Diffractory",
    `Turn off messages that are not about payments, disputes or safety: ${absolute("/account/notifications")}`,
  );
  return <>{lines.join("\n")}</>;
}

const ENTITIES: Record<string, string> = { "&amp;": "&", "&lt;": "<", "&gt;": ">", "&quot;": '"', "&#x27;": "'", "&#39;": "'" };

export function renderLetter(letter: Letter, name: string): RenderedLetter {
  const html = `<!DOCTYPE html>${renderToStaticMarkup(<LetterHtml letter={letter} name={name} />)}`;
  const text = renderToStaticMarkup(<LetterText letter={letter} name={name} />).replace(/&(amp|lt|gt|quot|#x27|#39);/g, (m) => ENTITIES[m]);
  return { subject: letter.subject, html, text };
}
