import { useId, type InputHTMLAttributes, type ReactNode, type SelectHTMLAttributes } from 'react';

const control =
  'block w-full rounded-md border bg-sheet px-3 py-2 text-sm text-ink shadow-inner shadow-rule-soft/60 ' +
  'placeholder:text-ink-faint focus:border-press focus:outline-none focus:ring-2 focus:ring-press/20';

interface FieldShellProps {
  label: ReactNode;
  hint?: ReactNode;
  error?: string;
  id: string;
  children: ReactNode;
  className?: string;
}

/** Label above, control, then either the inline error (from zod or the API) or a quiet hint. */
function FieldShell({ label, hint, error, id, children, className = '' }: FieldShellProps) {
  return (
    <div className={`flex flex-col gap-1.5 ${className}`}>
      <label htmlFor={id} className="text-sm font-medium text-ink">
        {label}
      </label>
      {children}
      {error ? (
        <p id={`${id}-error`} role="alert" className="text-xs font-medium text-stamp">
          {error}
        </p>
      ) : hint ? (
        <p id={`${id}-hint`} className="text-xs text-ink-soft">
          {hint}
        </p>
      ) : null}
    </div>
  );
}

interface TextFieldProps extends Omit<InputHTMLAttributes<HTMLInputElement>, 'id'> {
  label: ReactNode;
  hint?: ReactNode;
  error?: string;
  mono?: boolean;
  fieldClassName?: string;
}

export function TextField({ label, hint, error, mono, fieldClassName, className = '', ...rest }: TextFieldProps) {
  const id = useId();
  return (
    <FieldShell label={label} hint={hint} error={error} id={id} className={fieldClassName}>
      <input
        id={id}
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? `${id}-error` : hint ? `${id}-hint` : undefined}
        className={`${control} ${error ? 'border-stamp' : 'border-rule'} ${mono ? 'font-mono' : ''} ${className}`}
        {...rest}
      />
    </FieldShell>
  );
}

/**
 * A password being chosen (sign-up, reset): the rule shown up front and the browser told it is new,
 * so password managers offer to generate and save one.
 */
export function NewPasswordField({ label = 'Password', minLength, ...rest }: Omit<TextFieldProps, 'type' | 'autoComplete' | 'hint' | 'name' | 'label'> & { label?: string; minLength: number }) {
  return <TextField label={label} name="password" type="password" autoComplete="new-password" hint={`At least ${minLength} characters.`} {...rest} />;
}

interface SelectFieldProps extends Omit<SelectHTMLAttributes<HTMLSelectElement>, 'id'> {
  label: ReactNode;
  hint?: ReactNode;
  error?: string;
  fieldClassName?: string;
}

export function SelectField({ label, hint, error, fieldClassName, className = '', children, ...rest }: SelectFieldProps) {
  const id = useId();
  return (
    <FieldShell label={label} hint={hint} error={error} id={id} className={fieldClassName}>
      <select
        id={id}
        aria-invalid={error ? true : undefined}
        className={`${control} ${error ? 'border-stamp' : 'border-rule'} pr-8 ${className}`}
        {...rest}
      >
        {children}
      </select>
    </FieldShell>
  );
}
