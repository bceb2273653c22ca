import { useState, type RefObject } from "react";
import { useHydrated } from "#app/utils/use-hydrated.ts";

/*
 * "Download SVG" and "Download PNG" for a picture drawn as inline SVG, so a figure can go
 * straight into a paper or a slide. The SVG is the page's own drawing, made standalone (its
 * namespace, size and font named); the PNG is that SVG drawn at twice its size on a white ground.
 * Both are made in the browser, so the buttons appear only once the page's script is running.
 */

const FONT = "'Source Serif 4', 'Source Serif Pro', Georgia, serif";

/** The figure's first <svg>, as a standalone SVG document. */
export function standaloneSvg(svg: SVGSVGElement): { text: string; width: number; height: number } {
  const copy = svg.cloneNode(true) as SVGSVGElement;
  const box = svg.viewBox.baseVal;
  const width = box && box.width ? box.width : svg.clientWidth;
  const height = box && box.height ? box.height : svg.clientHeight;
  copy.setAttribute("xmlns", "http://www.w3.org/2000/svg");
  copy.setAttribute("width", String(width));
  copy.setAttribute("height", String(height));
  copy.setAttribute("font-family", FONT);
  copy.removeAttribute("class");
  copy.removeAttribute("style");
  // links inside a picture (the stratigraphic column's lab codes) mean nothing in a file
  for (const a of Array.from(copy.querySelectorAll("a"))) a.replaceWith(...Array.from(a.childNodes));
  const text = `<?xml version="1.0" encoding="UTF-8"?>\n${new XMLSerializer().serializeToString(copy)}`;
  return { text, width, height };
}

function save(blob: Blob, fileName: string) {
  const url = URL.createObjectURL(blob);
  const a = document.createElement("a");
  a.href = url;
  a.download = fileName;
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}

async function pngFrom(svg: SVGSVGElement, scale = 2): Promise<Blob> {
  const { text, width, height } = standaloneSvg(svg);
  const url = URL.createObjectURL(new Blob([text], { type: "image/svg+xml" }));
  try {
    const image = new Image();
    image.decoding = "async";
    await new Promise<void>((resolve, reject) => {
      image.onload = () => resolve();
      image.onerror = () => reject(new Error("The picture could not be drawn."));
      image.src = url;
    });
    const canvas = document.createElement("canvas");
    canvas.width = Math.round(width * scale);
    canvas.height = Math.round(height * scale);
    const ctx = canvas.getContext("2d");
    if (!ctx) throw new Error("This browser cannot draw a PNG.");
    ctx.fillStyle = "#ffffff";
    ctx.fillRect(0, 0, canvas.width, canvas.height);
    ctx.drawImage(image, 0, 0, canvas.width, canvas.height);
    return await new Promise<Blob>((resolve, reject) =>
      canvas.toBlob((b) => (b ? resolve(b) : reject(new Error("This browser cannot write a PNG."))), "image/png"),
    );
  } finally {
    URL.revokeObjectURL(url);
  }
}

/** File names keep letters, digits, dots and dashes: "calibration-KVX-1234". */
export function figureFileName(base: string): string {
  return base.replace(/[^A-Za-z0-9.-]+/g, "-").replace(/^-+|-+$/g, "") || "figure";
}

export function FigureDownloads({ figure, fileName }: { figure: RefObject<HTMLElement | null>; fileName: string }) {
  const ready = useHydrated();
  const [problem, setProblem] = useState<string | null>(null);
  if (!ready) return null;
  const name = figureFileName(fileName);
  const svg = () => figure.current?.querySelector("svg") ?? null;

  return (
    <div className="mt-2 flex flex-wrap items-center gap-2 text-sm" data-testid="figure-downloads">
      <span className="text-muted">Download the picture:</span>
      <button
        type="button"
        className="btn-quiet py-0.5 text-sm"
        onClick={() => {
          const el = svg();
          if (el) save(new Blob([standaloneSvg(el).text], { type: "image/svg+xml" }), `${name}.svg`);
        }}
      >
        SVG
      </button>
      <button
        type="button"
        className="btn-quiet py-0.5 text-sm"
        onClick={() => {
          const el = svg();
          if (!el) return;
          setProblem(null);
          pngFrom(el)
            .then((blob) => save(blob, `${name}.png`))
            .catch((e: unknown) => setProblem(e instanceof Error ? e.message : String(e)));
        }}
      >
        PNG
      </button>
      {problem ? (
        <span role="alert" className="text-conflict">
          {problem}
        </span>
      ) : null}
    </div>
  );
}
