"use client";

/** The DOM id of the input for a field key (also the target of the problem list's links). */
export const inputId = (fieldKey: string): string => `f-${fieldKey.replace(/[^A-Za-z0-9_-]/g, "_")}`;

export interface EditorFieldProps {
  fieldKey: string;
  /** Visible label text. */
  label: string;
  /** Read by screen readers after the label, e.g. "of make_B", so every input has a distinct name. */
  labelSuffix?: string;
  hideLabel?: boolean;
  value: string;
  onChange: (value: string) => void;
  issues?: string[];
  hint?: string;
  placeholder?: string;
  list?: string;
  inputMode?: "decimal" | "text";
  className?: string;
  inputClassName?: string;
  multiline?: boolean;
}

/**
 * A labelled text input with its problems right under it: `aria-invalid`, and
 * `aria-errormessage`/`aria-describedby` pointing at the message.
 */
export function EditorField(props: EditorFieldProps) {
  const id = inputId(props.fieldKey);
  const errId = `${id}-err`;
  const hintId = `${id}-hint`;
  const hasIssues = (props.issues?.length ?? 0) > 0;
  const describedBy = [hasIssues ? errId : null, props.hint ? hintId : null].filter(Boolean).join(" ") || undefined;
  const common = {
    id,
    value: props.value,
    placeholder: props.placeholder,
    "aria-invalid": hasIssues || undefined,
    "aria-errormessage": hasIssues ? errId : undefined,
    "aria-describedby": describedBy,
    className: `w-full rounded-md border border-ink/25 bg-white px-2 py-1.5 text-sm text-ink disabled:border-ink/10 disabled:bg-paper disabled:text-ink aria-[invalid=true]:border-red-600 aria-[invalid=true]:bg-red-50 ${props.inputClassName ?? ""}`,
  };
  return (
    <div className={`flex min-w-0 flex-col gap-0.5 ${props.className ?? ""}`}>
      <label htmlFor={id} className={props.hideLabel ? "sr-only" : "text-xs font-medium text-ink-soft"}>
        {props.label}
        {props.labelSuffix && <span className="sr-only"> {props.labelSuffix}</span>}
      </label>
      {props.multiline ? (
        <textarea {...common} rows={2} onChange={(e) => props.onChange(e.target.value)} />
      ) : (
        <input
          {...common} type="text" list={props.list} inputMode={props.inputMode} autoComplete="off" spellCheck={false}
          onChange={(e) => props.onChange(e.target.value)}
        />
      )}
      {props.hint && <span id={hintId} className="text-xs text-ink-soft">{props.hint}</span>}
      {hasIssues && (
        <p id={errId} className="text-xs font-medium text-red-700" data-testid="field-error">
          {props.issues!.join("; ")}
        </p>
      )}
    </div>
  );
}

export interface EditorSelectProps {
  fieldKey: string;
  label: string;
  labelSuffix?: string;
  hideLabel?: boolean;
  value: string;
  options: { value: string; label: string }[];
  onChange: (value: string) => void;
  issues?: string[];
  className?: string;
}

/** A labelled select with its problems under it. */
export function EditorSelect(props: EditorSelectProps) {
  const id = inputId(props.fieldKey);
  const errId = `${id}-err`;
  const hasIssues = (props.issues?.length ?? 0) > 0;
  const known = props.options.some((o) => o.value === props.value);
  return (
    <div className={`flex min-w-0 flex-col gap-0.5 ${props.className ?? ""}`}>
      <label htmlFor={id} className={props.hideLabel ? "sr-only" : "text-xs font-medium text-ink-soft"}>
        {props.label}
        {props.labelSuffix && <span className="sr-only"> {props.labelSuffix}</span>}
      </label>
      <select
        id={id} value={props.value} onChange={(e) => props.onChange(e.target.value)}
        aria-invalid={hasIssues || undefined} aria-errormessage={hasIssues ? errId : undefined} aria-describedby={hasIssues ? errId : undefined}
        className="w-full rounded-md border border-ink/25 bg-white px-2 py-1.5 text-sm text-ink disabled:border-ink/10 disabled:bg-paper disabled:text-ink aria-[invalid=true]:border-red-600"
      >
        {!known && <option value={props.value}>{props.value === "" ? "— choose —" : props.value}</option>}
        {props.options.map((o) => <option key={o.value} value={o.value}>{o.label}</option>)}
      </select>
      {hasIssues && <p id={errId} className="text-xs font-medium text-red-700" data-testid="field-error">{props.issues!.join("; ")}</p>}
    </div>
  );
}
