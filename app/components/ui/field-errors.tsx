/** A field's messages, tied to its input through `id` (the input's aria-describedby). */
export function FieldErrors({
  id,
  errors,
  render = (message) => message,
}: {
  id?: string;
  errors?: string[] | null;
  render?: (message: string) => React.ReactNode;
}) {
  if (!errors?.length) return null;
  return (
    <p id={id} className="field-error" role="alert">
      {errors.map((message, i) => (
        <span key={i}>
          {render(message)}
          {i < errors.length - 1 ? " " : null}
        </span>
      ))}
    </p>
  );
}
