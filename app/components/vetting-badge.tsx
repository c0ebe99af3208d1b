// A lab's vetting state as a badge with its word.
import { Badge } from "./ui";
import { VETTING_STATE_BADGES, type VettingState } from "~/domain/vetting";

export function VettingBadge({ state }: { state: VettingState }) {
  const { label, tone } = VETTING_STATE_BADGES[state];
  return <Badge tone={tone}>{label}</Badge>;
}
