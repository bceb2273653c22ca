// Timestamps shown in the interface, formatted on the server so the page reads the same after hydration.

export function formatTimestamp(value: Date | number | null | undefined): string | null {
  if (value == null) return null;
  const d = typeof value === "number" ? new Date(value) : value;
  return `${d.toISOString().slice(0, 16).replace("T", " ")} UTC`;
}
