// The due date and its words (app/domain/receipt.ts) and the confirmation sentences of verdicts that are not
// consistent (app/domain/verdict-confirmation.ts). Expected values follow the rules in docs/design.md,
// "The lab's records"; day arithmetic in UTC milliseconds (common practice).
import { describe, expect, it } from "vitest";
import { amountWords, conditionOfRefusal, dueDateFrom, dueStatus } from "~/domain/receipt";
import { confirmedNote, unconfirmedProblem } from "~/domain/verdict-confirmation";

const NOW = new Date("2026-12-05T12:00:00Z");
const DAY = 86_400_000;

describe("due dates", () => {
  it("adds the turnaround in days to the receipt time", () => {
    expect(dueDateFrom(NOW, 8).toISOString()).toBe("2026-12-13T12:00:00.000Z");
    expect(dueDateFrom(NOW, 0).toISOString()).toBe(NOW.toISOString());
  });

  it("says how an owed order stands, in words", () => {
    expect(dueStatus(new Date(NOW.getTime() - 2.5 * DAY), "measuring", NOW)).toEqual({ kind: "overdue", words: "Overdue by 3 days" });
    expect(dueStatus(new Date(NOW.getTime() - 3_600_000), "measuring", NOW)).toEqual({ kind: "overdue", words: "Overdue by 1 day" });
    expect(dueStatus(new Date(NOW.getTime() + 3_600_000), "samples_received", NOW).kind).toBe("today");
    expect(dueStatus(new Date(NOW.getTime() + 1.5 * DAY), "measuring", NOW)).toEqual({ kind: "soon", words: "Due in 2 days" });
    expect(dueStatus(new Date(NOW.getTime() + 6 * DAY), "measuring", NOW)).toEqual({ kind: "on_time", words: "Due in 6 days" });
  });

  it("no longer counts an order once its data is delivered, nor one without a date", () => {
    expect(dueStatus(new Date(NOW.getTime() - 5 * DAY), "data_delivered", NOW).kind).toBe("none");
    expect(dueStatus(null, "samples_in_transit", NOW).kind).toBe("none");
  });
});

describe("receipt words", () => {
  it("writes amounts with their unit and derives a refused sample's condition", () => {
    expect(amountWords(450, "mg")).toBe("450 mg");
    expect(amountWords(1.2, "g")).toBe("1.2 g");
    expect(amountWords(null, "mg")).toBeNull();
    expect(conditionOfRefusal("leaking")).toEqual({ condition: "leaking", sealIntact: false });
    expect(conditionOfRefusal("missing")).toEqual({ condition: "good", sealIntact: true });
  });
});

describe("confirmation of verdicts", () => {
  const files = [
    { name: "a.xy", version: 2, sampleLabel: "A", verdict: "review" as const },
    { name: "b.xy", version: 1, sampleLabel: null, verdict: "inconsistent" as const },
  ];

  it("names each file with its verdict in the product's words", () => {
    expect(unconfirmedProblem(files, "deliver")).toBe(
      "2 scans' lattice checks are not Consistent (a.xy v2 (sample A): Review; b.xy v1: Inconsistent); read the checks and tick the confirmation to deliver the data anyway.",
    );
    expect(confirmedNote(files.slice(0, 1), "accept")).toBe("Accepted with the checks' verdicts read and confirmed: a.xy v2 (sample A): Review.");
  });

  it("asks nothing when there is nothing to confirm", () => {
    expect(unconfirmedProblem([], "accept")).toBeNull();
    expect(confirmedNote([], "deliver")).toBe("");
  });
});
