/** A labelled input with its error shown beside it (the field's own message). */
export function Field(props: {
  label: string; name: string; type?: string; error?: string; autoComplete?: string; required?: boolean; defaultValue?: string;
}) {
  const id = `f-${props.name}`;
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-sm font-medium">{props.label}</label>
      <input
        id={id} name={props.name} type={props.type ?? "text"} autoComplete={props.autoComplete} required={props.required}
        defaultValue={props.defaultValue}
        aria-invalid={props.error ? true : undefined} aria-describedby={props.error ? `${id}-err` : undefined}
        className="rounded-md border border-ink/25 bg-white px-3 py-2 text-ink aria-[invalid]:border-red-600"
      />
      {props.error && <p id={`${id}-err`} className="text-sm text-red-700">{props.error}</p>}
    </div>
  );
}
