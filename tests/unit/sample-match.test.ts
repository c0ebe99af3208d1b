// Matching delivered file names to sample labels (app/domain/sample-match.ts). The names follow the habits of
// instrument software and lab people (labels with dashes, underscores, spaces, mixed case); the expectations are
// the rule itself (longest label wins, ambiguity proposes nothing), so "from memory" of common file naming.
import { describe, expect, it } from "vitest";
import { normaliseName, proposeSample, unmatchedReason } from "~/domain/sample-match";

const samples = [
  { id: "a", label: "HC-2645" },
  { id: "b", label: "HC-2645-2" },
  { id: "c", label: "Lot 7 top" },
  { id: "d", label: "S1" },
  { id: "e", label: "S10" },
];

describe("normaliseName", () => {
  it("folds case and every run of separators to one space", () => {
    expect(normaliseName("  HC_2645--2 .Co ")).toBe("hc 2645 2 co");
    expect(normaliseName("Lot\u00a07/top")).toBe("lot 7 top");
  });
});

describe("proposeSample", () => {
  it("finds the label inside the file name whatever the case and separators", () => {
    expect(proposeSample("lot_7_TOP_cu_5-80.xy", samples)?.id).toBe("c");
    expect(proposeSample("lot-7-top.xrdml", samples)?.id).toBe("c");
  });

  it("lets the longest matching label win", () => {
    expect(proposeSample("HC-2645-2_Co_15-110.xy", samples)?.id).toBe("b");
    expect(proposeSample("HC-2645_Co_15-110.xy", samples)?.id).toBe("a");
  });

  it("matches whole words only: S1 is not found in S10", () => {
    expect(proposeSample("s10_scan.xy", samples)?.id).toBe("e");
    expect(proposeSample("s1_scan.xy", samples)?.id).toBe("d");
    expect(proposeSample("s100_scan.xy", samples)).toBeNull();
  });

  it("proposes nothing when no label or two labels of the same length fit", () => {
    expect(proposeSample("background.xy", samples)).toBeNull();
    const two = [
      { id: "x", label: "A-1" },
      { id: "y", label: "B-1" },
    ];
    expect(proposeSample("A-1_and_B-1.xy", two)).toBeNull();
    expect(unmatchedReason("A-1_and_B-1.xy", two)).toContain("more than one sample (A-1, B-1)");
    expect(unmatchedReason("background.xy", two)).toContain("none of the sample labels");
  });

  it("proposes nothing when two samples share a label", () => {
    expect(
      proposeSample("twin.xy", [
        { id: "x", label: "twin" },
        { id: "y", label: "Twin" },
      ]),
    ).toBeNull();
  });

  it("ignores the file extension", () => {
    expect(proposeSample("sample.xy", [{ id: "x", label: "xy" }])).toBeNull();
  });
});
