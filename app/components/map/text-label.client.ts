// Leaflet treats a string tooltip or popup as HTML. Names come from contributors, so every label
// handed to Leaflet is an element whose text is set as text, never parsed as markup.
export function textLabel(text: string): HTMLElement {
  const span = document.createElement("span");
  span.textContent = text;
  return span;
}
