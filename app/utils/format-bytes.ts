/** A size for people: "512 bytes", "24 KB", "10.0 MB" (1 KB = 1,024 bytes), in messages and on pages alike. */
export function formatBytes(n: number): string {
  if (n >= 1024 * 1024) return `${(n / 1024 / 1024).toFixed(1)} MB`;
  if (n >= 1024) return `${Math.round(n / 1024)} KB`;
  return `${n} bytes`;
}
