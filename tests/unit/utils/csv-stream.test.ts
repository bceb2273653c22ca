import Papa from "papaparse";
import { describe, expect, test } from "vitest";
import { csvLine, csvStream } from "#app/utils/csv-stream.ts";
import { geojsonStream } from "#app/utils/geojson-stream.ts";
import { streamToText, textStream } from "#app/utils/text-stream.ts";

describe("csvLine", () => {
  test.each(['=HYPERLINK("x")', "+1", "-1", "@SUM(A1)", "\tcmd", "\rcmd"])(
    "a text cell starting %j cannot run as a formula",
    (cell) => {
      const line = csvLine([cell]);
      const [[parsed]] = Papa.parse<string[]>(line.trimEnd(), { delimiter: "," }).data;
      expect(parsed!.startsWith("'")).toBe(true);
      expect(parsed!.slice(1)).toBe(cell);
    },
  );

  test("numbers stay numbers, negative ones too; text is quoted only when it must be", () => {
    expect(csvLine([-45.5, 0, 12, null, true, "a,b", 'say "x"'])).toBe('-45.5,0,12,,true,"a,b","say ""x"""\r\n');
  });
});

describe("csvStream", () => {
  test("streams many rows in several chunks and the text is the same as line by line", async () => {
    const rows = Array.from({ length: 5_500 }, (_, i) => [i, `DEMO-${i}`, -i / 3, i % 7 === 0 ? "=1+1" : "ok"]);
    const stream = csvStream(["id", "lab_code", "value", "note"], rows);
    const reader = stream.getReader();
    const decoder = new TextDecoder();
    let chunks = 0;
    let text = "";
    for (;;) {
      const { done, value } = await reader.read();
      if (done) break;
      chunks++;
      text += decoder.decode(value, { stream: true });
    }
    expect(chunks).toBeGreaterThan(1);
    const expected = csvLine(["id", "lab_code", "value", "note"]) + rows.map(csvLine).join("");
    expect(text).toBe(expected);
    const parsed = Papa.parse<Record<string, string>>(text, { header: true, skipEmptyLines: true }).data;
    expect(parsed).toHaveLength(5_500);
    expect(parsed[7]!.note).toBe("'=1+1");
    expect(Number(parsed[3]!.value)).toBe(-1);
  });

  test("a cancelled stream stops its generator", async () => {
    let closed = false;
    function* gen() {
      try {
        for (let i = 0; ; i++) yield "x".repeat(1000);
      } finally {
        closed = true;
      }
    }
    const stream = textStream(gen());
    const reader = stream.getReader();
    await reader.read();
    await reader.cancel();
    expect(closed).toBe(true);
  });
});

describe("geojsonStream", () => {
  test("a FeatureCollection of points with [longitude, latitude] and the metadata as a foreign member", async () => {
    const text = await streamToText(
      geojsonStream({ count: 2 }, [
        { id: 1, longitude: -64.5, latitude: 58.25, properties: { lab_code: "DEMO-1" } },
        { id: 2, longitude: -70, latitude: 59, properties: { lab_code: "DEMO-2" } },
      ]),
    );
    const fc = JSON.parse(text);
    expect(fc.type).toBe("FeatureCollection");
    expect(fc.metadata).toEqual({ count: 2 });
    expect(fc.features).toHaveLength(2);
    expect(fc.features[0]).toEqual({
      type: "Feature",
      id: 1,
      geometry: { type: "Point", coordinates: [-64.5, 58.25] },
      properties: { lab_code: "DEMO-1" },
    });
  });

  test("an empty collection is valid JSON", async () => {
    expect(JSON.parse(await streamToText(geojsonStream({}, []))).features).toEqual([]);
  });
});
