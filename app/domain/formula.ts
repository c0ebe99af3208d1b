// Reads a chemical formula (LiFePO4, Ca10(PO4)6(OH)2, CuSO4·5H2O, Li0.5CoO2) into its element symbols.

/** The element symbols of the periodic table, H to Og. */
export const ELEMENT_SYMBOLS: readonly string[] = (
  "H He Li Be B C N O F Ne Na Mg Al Si P S Cl Ar K Ca Sc Ti V Cr Mn Fe Co Ni Cu Zn Ga Ge As Se Br Kr " +
  "Rb Sr Y Zr Nb Mo Tc Ru Rh Pd Ag Cd In Sn Sb Te I Xe Cs Ba La Ce Pr Nd Pm Sm Eu Gd Tb Dy Ho Er Tm Yb Lu " +
  "Hf Ta W Re Os Ir Pt Au Hg Tl Pb Bi Po At Rn Fr Ra Ac Th Pa U Np Pu Am Cm Bk Cf Es Fm Md No Lr " +
  "Rf Db Sg Bh Hs Mt Ds Rg Cn Nh Fl Mc Lv Ts Og"
).split(" ");

const KNOWN = new Set(ELEMENT_SYMBOLS);
const OPEN: Record<string, string> = { "(": ")", "[": "]", "{": "}" };
const CLOSE = new Set([")", "]", "}"]);
// Separators of hydrates and adducts: middle dot, bullet, asterisk, a plain full stop between parts.
const ADDUCT = new Set(["·", "•", "∙", "*", "⋅"]);

export type FormulaResult = { elements: string[] } | { error: string };

/**
 * Element symbols of a formula, in order of first appearance. Brackets, multipliers (integers or decimals
 * for partial occupancy) and hydrate parts (`·5H2O`) are understood; anything else is an error sentence.
 */
export function parseFormula(text: string): FormulaResult {
  const s = text.trim().replace(/\s+/g, "");
  if (!s) return { error: "Enter the chemical formula, e.g. LiFePO4." };
  if (s.length > 200) return { error: "A formula has at most 200 characters." };
  const elements: string[] = [];
  const stack: string[] = [];
  let i = 0;
  let sawAtom = false;
  while (i < s.length) {
    const ch = s[i];
    if (/[A-Z]/.test(ch)) {
      let symbol = ch;
      if (i + 1 < s.length && /[a-z]/.test(s[i + 1])) symbol += s[i + 1];
      if (!KNOWN.has(symbol)) return { error: `“${symbol}” in ${text.trim()} is not an element symbol.` };
      i += symbol.length;
      if (!elements.includes(symbol)) elements.push(symbol);
      sawAtom = true;
      i = skipNumber(s, i);
      if (i < 0) return { error: `The number after ${symbol} in ${text.trim()} is not a valid count.` };
    } else if (ch in OPEN) {
      stack.push(OPEN[ch]);
      i += 1;
    } else if (CLOSE.has(ch)) {
      const expected = stack.pop();
      if (expected !== ch) return { error: `The brackets in ${text.trim()} do not balance (an extra or mismatched “${ch}”).` };
      i = skipNumber(s, i + 1);
      if (i < 0) return { error: `The number after “${ch}” in ${text.trim()} is not a valid count.` };
    } else if (ADDUCT.has(ch) || (ch === "." && i > 0 && !/\d/.test(s[i - 1]))) {
      if (stack.length) return { error: `The brackets in ${text.trim()} do not balance before “${ch}”.` };
      i = skipNumber(s, i + 1); // the part's multiplier, as in ·5H2O
      if (i < 0) return { error: `The multiplier in ${text.trim()} is not a valid count.` };
    } else if (/[a-z]/.test(ch)) {
      return { error: `Element symbols start with a capital letter; “${ch}” in ${text.trim()} does not.` };
    } else if (/\d/.test(ch) && i === 0) {
      i = skipNumber(s, i);
      if (i < 0) return { error: `The number at the start of ${text.trim()} is not a valid count.` };
    } else {
      return { error: `“${ch}” is not allowed in a chemical formula.` };
    }
  }
  if (stack.length) return { error: `The brackets in ${text.trim()} do not balance (a “${stack[stack.length - 1]}” is missing).` };
  if (!sawAtom) return { error: `${text.trim()} contains no element symbols.` };
  return { elements };
}

/** Skips an optional count (5, 0.5, .5); returns the new index, or −1 for a malformed number like 1.2.3. */
function skipNumber(s: string, i: number) {
  const match = /^(\d+(\.\d+)?|\.\d+)/.exec(s.slice(i));
  if (!match) return i;
  const next = i + match[0].length;
  if (s[next] === "." && /\d/.test(s[next + 1] ?? "")) return -1;
  if (Number(match[0]) === 0) return -1;
  return next;
}

/** One run of a formula as the trade writes it: normal text, a subscript count or a superscript charge. */
export interface FormulaPart {
  text: string;
  kind: "text" | "sub" | "sup";
}

const CHARGE = /^(.*?)(?:(?:\^|\s)(\d*[+\-−])|([A-Za-z)\]}])(\d?[+\-−]))$/;

/**
 * A formula split into runs for display — counts after a symbol or bracket as subscripts, a hydrate's multiplier
 * after "·" as normal text, a trailing charge ("^2-", " 2-", "3+" after a symbol) as a superscript — or null when
 * the text is not a formula that parseFormula accepts (names such as "Form I" or "NMC811" stay as written).
 */
export function formulaParts(text: string): FormulaPart[] | null {
  const trimmed = text.trim();
  let body = trimmed;
  let charge = "";
  const m = CHARGE.exec(trimmed);
  if (m) {
    body = m[3] ? m[1] + m[3] : m[1];
    charge = (m[2] ?? m[4] ?? "").replace("-", "−");
  }
  if (!body || /\s/.test(body) || "elements" in parseFormula(body) === false) return null;
  const parts: FormulaPart[] = [];
  const push = (s: string, kind: FormulaPart["kind"]) => {
    const last = parts[parts.length - 1];
    if (last && last.kind === kind) last.text += s;
    else parts.push({ text: s, kind });
  };
  let i = 0;
  while (i < body.length) {
    const number = /^(\d+(\.\d+)?|\.\d+)/.exec(body.slice(i));
    if (number) {
      const prev = body[i - 1] ?? "";
      // A count follows a symbol or a closing bracket; a multiplier opens the formula or follows "·".
      push(number[0], /[A-Za-z)\]}]/.test(prev) ? "sub" : "text");
      i += number[0].length;
    } else {
      push(body[i] === "*" ? "·" : body[i], "text");
      i += 1;
    }
  }
  if (charge) push(charge, "sup");
  return parts;
}

const SUB_DIGITS = "₀₁₂₃₄₅₆₇₈₉";
const SUP: Record<string, string> = { "+": "⁺", "−": "⁻", "0": "⁰", "1": "¹", "2": "²", "3": "³", "4": "⁴", "5": "⁵", "6": "⁶", "7": "⁷", "8": "⁸", "9": "⁹" };

/**
 * A formula in plain text with Unicode sub- and superscripts (LiFePO₄, Fe³⁺), for places that cannot hold markup:
 * canvas labels, e-mail subjects, CSV-free plain text. Text that is not a formula comes back as it was.
 */
export function formulaUnicode(text: string): string {
  return formulaRuns(text)
    .map((p) =>
      p.kind === "sub" ? p.text.replace(/\d/g, (d) => SUB_DIGITS[Number(d)]) : p.kind === "sup" ? [...p.text].map((c) => SUP[c] ?? c).join("") : p.text,
    )
    .join("");
}

/**
 * Running text (a phase's name, "LiFePO4 (olivine)", "Li3PO4 residue") as runs: each word that is a formula with a
 * count, bracket or charge gets its sub- and superscripts; every other character stays as written.
 */
export function formulaRuns(text: string): FormulaPart[] {
  const runs: FormulaPart[] = [];
  const push = (p: FormulaPart) => {
    const last = runs[runs.length - 1];
    if (last && last.kind === p.kind) last.text += p.text;
    else runs.push({ ...p });
  };
  for (const token of text.split(/(\s+)/)) {
    if (!token) continue;
    const whole = formulaWord(token);
    if (whole) {
      whole.forEach(push);
      continue;
    }
    // Punctuation around a formula in a sentence: "(LiFePO4)", "LiFePO4,".
    const m = /^([([{"“]*)(.*?)([)\]}"”.,;:]*)$/.exec(token);
    const inner = m?.[2] ? formulaWord(m[2]) : null;
    if (m && inner) {
      if (m[1]) push({ text: m[1], kind: "text" });
      inner.forEach(push);
      if (m[3]) push({ text: m[3], kind: "text" });
    } else {
      push({ text: token, kind: "text" });
    }
  }
  return runs;
}

/**
 * A word of running text read as a formula when it is one and has a count, bracket or charge to show, and names at
 * least two element symbols: a product or grade code such as "C20" or "B2" is a valid formula of one element, but
 * in a sentence it is far more often a code than C₂₀ (common practice).
 */
export function formulaWord(word: string): FormulaPart[] | null {
  if ((word.match(/[A-Z]/g)?.length ?? 0) < 2 || !/[\d()[\]{}+\-−·]/.test(word)) return null;
  const parts = formulaParts(word);
  return parts?.some((p) => p.kind !== "text" || /[·]/.test(p.text)) ? parts : null;
}
