// Matches a delivered file's name to one of the order's sample labels (browser-safe): the lab drops files named
// after the samples ("HC-2645-2_Co_15-110.xy" for sample "HC-2645-2") and the screen proposes the sample,
// which the lab confirms before the files count (docs/design.md, "The lab's records").

/** Lower case, with every run of spaces, dashes, underscores, dots and other separators made one space. */
export function normaliseName(text: string): string {
  return text
    .normalize("NFKC")
    .toLowerCase()
    .replace(/[^\p{L}\p{N}]+/gu, " ")
    .trim();
}

/** The name without its extension ("a.b.xy" → "a.b"). */
const stem = (fileName: string) => fileName.replace(/\.[^.\s]{1,8}$/, "");

/**
 * The sample whose label the file name contains, compared after normalising case and separators and only at
 * word boundaries ("S1" is not found in "S10"). The longest matching label wins (label "HC-2645-2" beats
 * "HC-2645" in "HC-2645-2_Co.xy"); when two different labels of the same length match, or no label matches,
 * the answer is null and the lab chooses.
 */
export function proposeSample<S extends { id: string; label: string }>(fileName: string, samples: readonly S[]): S | null {
  const name = ` ${normaliseName(stem(fileName))} `;
  let best: S | null = null;
  let bestLength = 0;
  let tie = false;
  for (const s of samples) {
    const label = normaliseName(s.label);
    if (!label || !name.includes(` ${label} `)) continue;
    if (label.length > bestLength) {
      best = s;
      bestLength = label.length;
      tie = false;
    } else if (label.length === bestLength && best && best.id !== s.id) tie = true;
  }
  return tie ? null : best;
}

/** Why a scan waits for a sample, in one sentence, when no sample was proposed for it. */
export function unmatchedReason(fileName: string, samples: readonly { id: string; label: string }[]): string {
  const name = ` ${normaliseName(stem(fileName))} `;
  const found = samples.filter((s) => {
    const label = normaliseName(s.label);
    return label && name.includes(` ${label} `);
  });
  if (found.length > 1) return `Its name fits more than one sample (${found.map((s) => s.label).join(", ")}); choose the one it belongs to.`;
  return `Its name contains none of the sample labels (${samples.map((s) => s.label).join(", ")}); choose the sample it belongs to.`;
}
