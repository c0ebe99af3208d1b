// An instrument's calibration state as a badge (word, shape and colour), on the lab's capabilities and calibration
// screens (docs/design.md#calibration-on-record).
import { Badge, type BadgeTone } from "~/components/ui";
import { CALIBRATION_STATE_LABELS, type CalibrationState } from "~/domain/calibration-record";

const STATE_TONES: Record<CalibrationState, BadgeTone> = { none: "neutral", ok: "ok", overdue: "caution", out_of_control: "danger" };

export function CalibrationStateBadge({ state }: { state: CalibrationState }) {
  return <Badge tone={STATE_TONES[state]}>{CALIBRATION_STATE_LABELS[state]}</Badge>;
}
