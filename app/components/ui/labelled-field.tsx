import { FieldErrors } from "#app/components/ui/field-errors.tsx";

/**
 * A labelled form field with its messages under it (tied to the input by `errorId`, which the
 * input names in aria-describedby): the editors' upload forms share it.
 */
export function LabelledField({
  label,
  id,
  errors,
  errorId,
  children,
}: {
  label: string;
  id: string;
  errors: string[] | undefined;
  errorId: string;
  children: React.ReactNode;
}) {
  return (
    <div className="field">
      <label htmlFor={id}>{label}</label>
      {children}
      <FieldErrors id={errorId} errors={errors} />
    </div>
  );
}
