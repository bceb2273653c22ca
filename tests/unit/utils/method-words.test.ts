import { describe, expect, it } from "vitest";
import { methodWords, signalShortWords } from "#app/utils/labels.ts";

describe("methodWords", () => {
  it("says the method in words, with a luminescence signal by its short trade name", () => {
    expect(methodWords("radiocarbon")).toBe("radiocarbon");
    expect(methodWords("luminescence", "OSL")).toBe("luminescence (OSL)");
    expect(methodWords("luminescence", "pIRIR")).toBe("luminescence (post-IR IRSL)");
    expect(methodWords("luminescence", null)).toBe("luminescence");
  });

  it("leaves out the explanation a signal's label carries", () => {
    expect(signalShortWords("IRSL")).toBe("IRSL");
    expect(signalShortWords("TL")).toBe("TL");
  });
});
