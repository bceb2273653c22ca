import { gradeWord } from "#app/utils/labels.ts";

// One hue, four depths: the word always accompanies the number, so colour is never the only cue.
const TONES: Record<number, string> = {
  3: "bg-ice-800 text-white border-ice-800",
  2: "bg-ice-500 text-white border-ice-500",
  1: "bg-ice-200 text-ink border-ice-300",
  0: "bg-ice-50 text-muted border-ice-200",
};

/** A reliability grade as number + word on the ice scale; "ungraded" when there is none. */
export function GradeBadge({ grade }: { grade: number | null | undefined }) {
  if (grade == null) {
    return <span className="text-sm text-muted italic">ungraded</span>;
  }
  return (
    <span
      className={`inline-flex items-baseline gap-1 rounded border px-1.5 py-0 text-sm whitespace-nowrap ${TONES[grade] ?? ""}`}
      title={`Reliability grade ${grade}: ${gradeWord(grade)}`}
    >
      <span className="font-semibold">{grade}</span>
      <span>{gradeWord(grade)}</span>
    </span>
  );
}
