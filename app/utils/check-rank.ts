/** Severity of a check result from its rank (0 pass … 3 conflict), as the queue sorts and shows it. */
const RANK_WORDS = ["pass", "note", "warning", "conflict"] as const;
export const rankWord = (r: number | null) => (r === null ? null : RANK_WORDS[r]);
