import { createElement } from "react";
import { renderToStaticMarkup } from "react-dom/server";
import { describe, expect, test } from "vitest";
import { CalibrationPlot, formatRange, plotWindow } from "#app/components/calibration-plot.tsx";

describe("plotWindow", () => {
  test("pads the density's span on both sides and never goes below 0 cal BP", () => {
    expect(plotWindow({ startCalBp: 11000, values: new Float32Array(1001) })).toEqual({ from: 12300, to: 10700 });
    expect(plotWindow({ startCalBp: 20, values: new Float32Array(11) })).toEqual({ from: 90, to: 0 });
  });
});

describe("formatRange", () => {
  test("older bound first, in cal BP or BC/AD (CHECK_VALUES A6: 12,000 cal BP = 10,051 BC)", () => {
    expect(formatRange({ from: 12000, to: 11830, p: 0.683 }, "bp")).toBe("12,000–11,830 cal BP");
    expect(formatRange({ from: 12000, to: 1949, p: 0.5 }, "bcad")).toBe("10,051 BC – AD 1");
  });
});

describe("CalibrationPlot", () => {
  test("renders on the server as an accessible svg with the numbers also in text", () => {
    const values = Array.from({ length: 201 }, (_, i) => Math.exp(-0.5 * ((i - 100) / 30) ** 2));
    const total = values.reduce((a, b) => a + b, 0);
    const html = renderToStaticMarkup(
      createElement(CalibrationPlot, {
        curve: {
          displayName: "Straight",
          version: "1",
          kind: "marine",
          citation: "Invented curve (fictional).",
          points: Array.from({ length: 41 }, (_, i) => ({ calBp: 9800 + i * 10, c14: 9800 + i * 10, sigma: 10 })),
        },
        measurement: { age: 10000, error: 30, deltaR: 0, deltaRError: 0 },
        calibration: {
          medianCalBp: 10000,
          hpd68: [{ from: 10030, to: 9970, p: 0.683 }],
          hpd95: [{ from: 10060, to: 9940, p: 0.954 }],
          density: { startCalBp: 9900, values: values.map((v) => v / total) },
        },
        scale: "bp",
        heading: "TEST-1",
      }),
    );
    expect(html).toMatch(/<svg[^>]*role="img"/);
    expect(html).toMatch(
      /aria-label="Calibration of TEST-1, 10,000 ± 30 ¹⁴C yr BP on Straight \(1\), ΔR 0 ± 0: median 10,000 cal BP; 95.4 % range 10,060–9,940 cal BP \(95.4 %\)."/,
    );
    expect(html).toContain("<title");
    expect(html).toContain("¹⁴C yr BP");
    expect(html).toContain("cal BP");
    expect(html).toContain("10,030–9,970 cal BP");
    expect(html).toContain("±1σ of the curve");
    expect(html).toContain("Invented curve (fictional).");
    expect(html.match(/data-range="68"/g)).toHaveLength(1);
    expect(html.match(/data-range="95"/g)).toHaveLength(1);
  });
});
