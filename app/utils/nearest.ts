// ---------------------------------------------------------------- nearest names

/** Edit distance (insertions, deletions, substitutions), case-insensitive. */
export function levenshtein(a: string, b: string): number {
  const s = a.toLowerCase();
  const t = b.toLowerCase();
  if (s === t) return 0;
  let prev = Array.from({ length: t.length + 1 }, (_, j) => j);
  for (let i = 1; i <= s.length; i++) {
    const cur = [i];
    for (let j = 1; j <= t.length; j++) {
      cur[j] = Math.min(prev[j]! + 1, cur[j - 1]! + 1, prev[j - 1]! + (s[i - 1] === t[j - 1] ? 0 : 1));
    }
    prev = cur;
  }
  return prev[t.length]!;
}

/** The closest candidate, if it is close enough to be a plausible typo (or contains the input). */
export function nearest(input: string, candidates: readonly string[]): string | null {
  let best: string | null = null;
  let bestD = Infinity;
  const low = input.toLowerCase();
  for (const c of candidates) {
    const d = levenshtein(input, c);
    if (d < bestD) {
      bestD = d;
      best = c;
    }
  }
  if (best === null) return null;
  const limit = Math.max(2, Math.ceil(Math.max(input.length, best.length) / 3));
  if (bestD <= limit) return best;
  const containing = candidates.find((c) => c.toLowerCase().includes(low) || low.includes(c.toLowerCase()));
  return containing ?? null;
}
