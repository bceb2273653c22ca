import { formatYears } from "#app/utils/age-format.ts";
import { GRADE_WORDS } from "#app/utils/labels.ts";
import { AGE_STOPS, gradeColour, NO_VALUE_MARK, UNDER_ICE_MARK, valueMark, type MarkStyle } from "#app/utils/map-colours.ts";

/** One map mark drawn as the map draws it (the same style objects), for the legend. */
export function Mark({ style, size = 16 }: { style: MarkStyle; size?: number }) {
  const c = size / 2;
  return (
    <svg width={size} height={size} aria-hidden="true" className="shrink-0">
      <circle
        cx={c}
        cy={c}
        r={style.radius + 1}
        fill={style.fillOpacity > 0 ? style.fillColor : "none"}
        fillOpacity={style.fillOpacity}
        stroke={style.weight > 0 ? style.color : "none"}
        strokeWidth={style.weight}
        strokeDasharray={style.dashArray}
      />
    </svg>
  );
}

function Row({ style, children }: { style: MarkStyle; children: React.ReactNode }) {
  return (
    <li className="flex items-center gap-2">
      <Mark style={style} />
      <span>{children}</span>
    </li>
  );
}

/** The legend for the map's current colouring; lists every mark the map can show with it. */
export function MapLegend({
  colourBy,
  ageDomain,
  timeSet,
}: {
  colourBy: "age" | "grade";
  ageDomain: [number, number];
  timeSet: boolean;
}) {
  return (
    <div className="space-y-2 text-sm" data-testid="map-legend">
      {colourBy === "age" ? (
        <div>
          <div
            className="h-3 rounded border border-ice-800"
            style={{ background: `linear-gradient(to right, ${AGE_STOPS.join(", ")})` }}
            aria-hidden="true"
          />
          <div className="mt-1 flex justify-between text-xs">
            <span>{formatYears(ageDomain[0])} cal BP (young)</span>
            <span>{formatYears(ageDomain[1])}+ (old)</span>
          </div>
        </div>
      ) : null}
      <ul className="space-y-1">
        {colourBy === "grade"
          ? [3, 2, 1, 0].map((g) => (
              <Row key={g} style={valueMark(gradeColour(g), g === 0)}>
                {g} {GRADE_WORDS[g]}
              </Row>
            ))
          : null}
        <Row style={NO_VALUE_MARK}>
          {colourBy === "grade" ? "not graded yet" : "no deglaciation age (no minimum-limiting or direct date)"}
        </Row>
        <Row style={UNDER_ICE_MARK}>still under ice at the slider’s time{timeSet ? "" : " (move the slider)"}</Row>
      </ul>
    </div>
  );
}
