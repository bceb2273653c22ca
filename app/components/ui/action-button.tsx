import { Form } from "react-router";

/**
 * A one-button POST form carrying an intent and a few hidden values: the row actions of the
 * tables (revoke, deactivate, activate, undo, withdraw). `confirm`, when given, asks first.
 */
export function ActionButton({
  intent,
  values = {},
  children,
  label,
  className = "btn-quiet py-0.5 text-sm",
  confirm,
}: {
  intent: string;
  values?: Record<string, string | number>;
  children: React.ReactNode;
  /** Accessible name when the visible text alone would be ambiguous in a table. */
  label?: string;
  className?: string;
  confirm?: string;
}) {
  return (
    <Form
      method="post"
      onSubmit={
        confirm
          ? (event) => {
              if (!window.confirm(confirm)) event.preventDefault();
            }
          : undefined
      }
    >
      <input type="hidden" name="intent" value={intent} />
      {Object.entries(values).map(([name, value]) => (
        <input key={name} type="hidden" name={name} value={value} />
      ))}
      <button type="submit" className={className} aria-label={label}>
        {children}
      </button>
    </Form>
  );
}
