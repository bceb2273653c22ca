import { getInputProps, type FieldMetadata } from "@conform-to/react";
import { FieldErrors } from "#app/components/ui/field-errors.tsx";
import { RecordLinkText } from "#app/components/ui/record-link-text.tsx";
import { columnSpec } from "#app/utils/determination-input/columns.ts";
import { FieldWarning } from "./field-warnings.tsx";

/* The determination form's field pieces: labels, units and help come from the upload template's column catalogue. */

export type Field = FieldMetadata<unknown, Record<string, unknown>, string[]>;
/** The form's fields by column name. */
export type Fields = Record<string, Field>;

export function Radio({
  name,
  value,
  checked,
  onChange,
  children,
  field,
}: {
  name: string;
  value: string;
  checked: boolean;
  onChange: (v: string) => void;
  children: React.ReactNode;
  field?: Field;
}) {
  return (
    <label className="flex items-baseline gap-2 font-normal text-ink">
      <input
        type="radio"
        name={name}
        value={value}
        checked={checked}
        onChange={() => onChange(value)}
        aria-invalid={field?.errors ? true : undefined}
        aria-describedby={field?.errors ? field.errorId : undefined}
      />
      <span>{children}</span>
    </label>
  );
}

export function TextField({
  field,
  column,
  label,
  className = "",
  inputMode,
  placeholder,
  autoComplete,
}: {
  field: Field;
  column: string;
  label?: string;
  className?: string;
  inputMode?: "decimal" | "numeric" | "text";
  placeholder?: string;
  autoComplete?: string;
}) {
  const spec = columnSpec(column);
  const helpId = `${field.id}-help`;
  const unit = spec?.unit && !spec.unit.startsWith("decimal degrees") ? spec.unit : "";
  return (
    <div className={`field ${className}`}>
      <label htmlFor={field.id}>
        {label ?? spec?.label ?? column}
        {unit ? <span className="font-normal"> ({unit})</span> : null}
      </label>
      <input
        {...getInputProps(field, { type: "text", ariaDescribedBy: spec?.help ? helpId : undefined })}
        inputMode={inputMode}
        placeholder={placeholder}
        autoComplete={autoComplete}
        className="input"
      />
      {spec?.help ? (
        <p id={helpId} className="text-sm text-muted">
          {spec.help}
        </p>
      ) : null}
      <FieldError field={field} />
      <FieldWarning column={column} />
    </div>
  );
}

/** The field's message; a duplicate lab code links to the record already in the registry. */
export function FieldError({ field }: { field: Field }) {
  return <FieldErrors id={field.errorId} errors={field.errors} render={(message) => <RecordLinkText text={message} />} />;
}
