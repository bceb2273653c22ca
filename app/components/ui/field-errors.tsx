/**
 * A field's messages, tied to its input through `id` (the input's aria-describedby). Announced as an
 * alert, except where they follow every keystroke (`announce={false}`: the input's description says them).
 */
export function FieldErrors({
  id,
  errors,
  render = (message) => message,
  announce = true,
}: {
  id?: string;
  errors?: string[] | null;
  render?: (message: string) => React.ReactNode;
  announce?: boolean;
}) {
  if (!errors?.length) return null;
  return (
    <p id={id} className="field-error" role={announce ? "alert" : undefined}>
      {errors.map((message, i) => (
        <span key={i}>
          {render(message)}
          {i < errors.length - 1 ? " " : null}
        </span>
      ))}
    </p>
  );
}
