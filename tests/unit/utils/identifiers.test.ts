import { describe, expect, it } from "vitest";
import { identifierKey, invisibleCharactersProblem, normaliseIdentifier } from "#app/utils/identifiers.ts";

// Code points from the Unicode Character Database (common practice; names as Unicode gives them).
describe("identifiers", () => {
  it("names each invisible or control character with its code point and position", () => {
    expect(invisibleCharactersProblem("ABC\u200B-1")).toBe("contains a zero-width space (U+200B) at position 4");
    expect(invisibleCharactersProblem("ABC-1\u0000")).toBe("contains a NUL character (U+0000) at position 6");
    expect(invisibleCharactersProblem("A\u00ADB")).toBe("contains a soft hyphen (U+00AD) at position 2");
    expect(invisibleCharactersProblem("A\uFEFFB")).toMatch(/byte-order mark .*U\+FEFF.* at position 2/);
    expect(invisibleCharactersProblem("Cove\u202E")).toMatch(/bidirectional control \(U\+202E\) at position 5/);
    expect(invisibleCharactersProblem("a\u200Db\u200Cc\u2060d")).toBe(
      "contains a zero-width joiner (U+200D) at position 2, a zero-width non-joiner (U+200C) at position 4 and a word joiner (U+2060) at position 6",
    );
    expect(invisibleCharactersProblem("A\tB")).toBe("contains a tab (U+0009) at position 2");
    expect(invisibleCharactersProblem("\u{E0041}")).toMatch(/tag character \(U\+E0041\) at position 1/);
  });

  it("passes ordinary identifiers, accents and other scripts", () => {
    for (const ok of ["TWQ-1234", "Fjærdalen Øst", "Île-des-Brumes", "Нарсак 3", "湖 12", "A B"]) {
      expect(invisibleCharactersProblem(ok)).toBeNull();
    }
  });

  it("normalises look-alikes to one identifier: full-width letters, non-breaking hyphens, dashes, spaces", () => {
    expect(normaliseIdentifier("ＡＢＣ-１")).toBe("ABC-1");
    expect(normaliseIdentifier("ABC\u20111")).toBe("ABC-1");
    expect(normaliseIdentifier("ABC\u20131")).toBe("ABC-1");
    expect(normaliseIdentifier("ABC\u22121")).toBe("ABC-1");
    expect(normaliseIdentifier("  North\u00A0 Cove  ")).toBe("North Cove");
    expect(identifierKey("ＡＢＣ\u2011１")).toBe(identifierKey("abc-1"));
    expect(identifierKey("Straße")).toBe(identifierKey("STRASSE"));
    expect(identifierKey("ABC-1")).not.toBe(identifierKey("ABC-2"));
  });
});
