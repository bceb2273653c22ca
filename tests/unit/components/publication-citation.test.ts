import { createElement } from "react";
import { renderToStaticMarkup } from "react-dom/server";
import { describe, expect, it } from "vitest";
import { PublicationCitation } from "#app/components/publication-citation.tsx";

const html = (publication: { citation: string; doi: string | null; title?: string | null }) =>
  renderToStaticMarkup(createElement(PublicationCitation, { publication }));
const text = (markup: string) => markup.replace(/<[^>]+>/g, "");

describe("a publication as people cite it", () => {
  it("writes a frozen 'untitled — doi:…' citation's DOI once, as the link", () => {
    const out = html({ citation: "untitled — doi:10.5555/thaw.0001", doi: "10.5555/thaw.0001" });
    expect(text(out)).toBe("untitled — doi:10.5555/thaw.0001");
    expect(out).toContain('href="https://doi.org/10.5555/thaw.0001"');
  });

  it("writes a full citation, then its DOI as a link", () => {
    const out = html({
      citation: "Quill, A. and Marsh, B. (2031) Retreat of an invented ice cap. Fictional Journal of Ice 4.",
      doi: "10.5555/thaw.0002",
      title: "Retreat of an invented ice cap",
    });
    expect(text(out)).toBe(
      "Quill, A. and Marsh, B. (2031) Retreat of an invented ice cap. Fictional Journal of Ice 4. doi:10.5555/thaw.0002",
    );
  });

  it("writes a citation without a DOI as it is", () => {
    expect(text(html({ citation: "Field report, no DOI (2030)", doi: null }))).toBe("Field report, no DOI (2030)");
  });
});
