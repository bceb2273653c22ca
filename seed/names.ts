// Invented names for the demo: sites, people, labs. Built from made-up syllables and
// glacial-geology words so that nothing reads as a real place, person or laboratory.

import type { Rng } from "./random.ts";

const HEADS = [
  "Kiv",
  "Tarr",
  "Uml",
  "Sorv",
  "Ilv",
  "Qem",
  "Navv",
  "Orl",
  "Pell",
  "Skarr",
  "Tuv",
  "Vesk",
  "Yrr",
  "Ebb",
  "Hask",
  "Lunn",
  "Mirr",
  "Brev",
  "Dask",
  "Frel",
  "Gorr",
  "Jask",
  "Olv",
  "Rund",
  "Sull",
  "Trev",
  "Wenn",
  "Zall",
  "Aav",
  "Cerr",
];
const LINKS = ["a", "i", "u", "o", "e", "aa", "", "ar", "il"];
const TAILS = ["lik", "viq", "ro", "nen", "sk", "mar", "dal", "rith", "quen", "lo", "sta", "ven", "rud", "lett"];

// Substrings of real place names in and around the demo region that an invented name must not contain.
const REAL_NAME_PARTS = [
  "nain",
  "hebron",
  "okak",
  "saglek",
  "nachvak",
  "ramah",
  "torngat",
  "ungava",
  "labrador",
  "kuujj",
  "kangi",
  "tasiu",
  "aupal",
  "quaqt",
  "killin",
  "koksoak",
  "akpat",
  "kogal",
  "makkov",
  "hopedal",
  "mugford",
  "kiglap",
  "naskau",
  "george",
  "whale",
  "payne",
  "leaf",
  "arnaud",
  "churchill",
  "caniap",
  "schefferv",
  "michikam",
  "mistast",
  "eclipse",
  "napak",
];

function invented(rng: Rng): string {
  for (;;) {
    const word = rng.pick(HEADS) + rng.pick(LINKS) + rng.pick(TAILS);
    const lower = word.toLowerCase();
    if (!REAL_NAME_PARTS.some((p) => lower.includes(p))) return word;
  }
}

/** A unique invented site name ending in a feature word, e.g. "Kivalik Delta". */
export function siteName(rng: Rng, features: readonly string[], taken: Set<string>): string {
  for (let attempt = 0; ; attempt++) {
    const base = invented(rng);
    const name = attempt < 50 ? `${base} ${rng.pick(features)}` : `${base} ${rng.pick(features)} ${attempt}`;
    if (!taken.has(name)) {
      taken.add(name);
      return name;
    }
  }
}

/** Fictional surnames made of glacial-geology words. */
export const SURNAMES = [
  "Frostmere",
  "Kettleby",
  "Morainewood",
  "Eskerholm",
  "Drumlinson",
  "Cirqueton",
  "Varvebridge",
  "Tillworth",
  "Outwashley",
  "Snowhaven",
  "Icefallow",
  "Kamesford",
  "Floeberg",
  "Sastrugill",
  "Nunatakker",
  "Rimebrook",
  "Fjordell",
  "Calvington",
  "Sedgewhistle",
  "Driftmoor",
];

const INITIALS = "ABCDEFGHJKLMNPRSTVW";

/** One to four invented authors; `lead`, when given, is the first. */
export function authorList(rng: Rng, lead?: string): string {
  const n = rng.weighted([
    [1, 0.2],
    [2, 0.35],
    [3, 0.3],
    [4, 0.15],
  ] as const);
  const others = rng.shuffle(SURNAMES.filter((s) => s !== lead));
  const names = (lead ? [lead, ...others] : others).slice(0, n).map((s) => `${s}, ${rng.pick([...INITIALS])}.`);
  if (names.length === 1) return names[0];
  return `${names.slice(0, -1).join(", ")} & ${names[names.length - 1]}`;
}

/** Short field-code prefix from a site name: "Kivalik Delta" → "KD". */
export function initials(name: string): string {
  return name
    .split(/\s+/)
    .filter((w) => /^[A-Z]/.test(w))
    .map((w) => w[0])
    .join("")
    .slice(0, 3);
}
