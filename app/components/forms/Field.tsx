import type { InputHTMLAttributes, ReactNode } from "react";
import { Form } from "react-router";

/** A labelled input with its problem (if any) announced beside it. */
export function Field({
  label,
  name,
  hint,
  problem,
  ...input
}: { label: string; name: string; hint?: ReactNode; problem?: string | null } & InputHTMLAttributes<HTMLInputElement>) {
  const id = `f-${name}`;
  return (
    <div className="space-y-1">
      <label htmlFor={id} className="block text-sm font-medium text-sediment-800">
        {label}
      </label>
      <input
        id={id}
        name={name}
        aria-invalid={problem ? true : undefined}
        aria-describedby={problem ? `${id}-problem` : hint ? `${id}-hint` : undefined}
        className="block w-full rounded-sm border border-sand-300 bg-white px-2.5 py-1.5 text-base shadow-inner focus:border-deep-500 aria-invalid:border-caution-600"
        {...input}
      />
      {hint && !problem ? (
        <p id={`${id}-hint`} className="text-xs text-sediment-600">
          {hint}
        </p>
      ) : null}
      {problem ? (
        <p id={`${id}-problem`} className="text-xs text-caution-800">
          {problem}
        </p>
      ) : null}
    </div>
  );
}

export function FormProblemNote({ message }: { message?: string | null }) {
  if (!message) return null;
  return (
    <p role="alert" className="rounded-sm border-l-4 border-caution-600 bg-caution-100 px-3 py-2 text-sm text-caution-800">
      {message}
    </p>
  );
}

export function PrimaryButton({ children, ...rest }: React.ButtonHTMLAttributes<HTMLButtonElement>) {
  return (
    <button
      className="rounded-sm bg-deep-800 px-3 py-1.5 text-sm font-medium text-sand-50 hover:bg-deep-700 disabled:opacity-60"
      {...rest}
    >
      {children}
    </button>
  );
}

export function QuietButton({ children, ...rest }: React.ButtonHTMLAttributes<HTMLButtonElement>) {
  return (
    <button className="rounded-sm border border-sand-300 bg-white px-2.5 py-1 text-sm text-sediment-800 hover:bg-sand-100" {...rest}>
      {children}
    </button>
  );
}

export function DangerButton({ children, ...rest }: React.ButtonHTMLAttributes<HTMLButtonElement>) {
  return (
    <button className="rounded-sm border border-caution-600 bg-white px-2.5 py-1 text-sm text-caution-800 hover:bg-caution-100" {...rest}>
      {children}
    </button>
  );
}

/** What an action answered: its problem (an alert) or its outcome (a status line). */
export function FormOutcome({ result }: { result: unknown }) {
  const r = (result ?? {}) as { error?: string; ok?: string };
  return (
    <>
      <FormProblemNote message={r.error} />
      {r.ok ? (
        <p role="status" className="text-sm">
          {r.ok}
        </p>
      ) : null}
    </>
  );
}

/** A labelled choice among named items, with an optional "none" first. */
export function ChoiceField({
  label,
  name,
  items,
  none,
  hint,
}: {
  label: string;
  name: string;
  items: Array<{ id: number; name: string }>;
  none?: string;
  hint?: ReactNode;
}) {
  return (
    <label className="text-sm">
      <span className="block font-medium">{label}</span>
      <select name={name} defaultValue={none !== undefined ? "" : undefined} className="mt-1 block w-full rounded-sm border border-sand-300 bg-white px-2 py-1.5">
        {none !== undefined ? <option value="">{none}</option> : null}
        {items.map((d) => (
          <option key={d.id} value={d.id}>
            {d.name}
          </option>
        ))}
      </select>
      {hint ? <span className="text-xs text-sediment-600">{hint}</span> : null}
    </label>
  );
}

/** A one-button form that posts an `intent` (and a few hidden ids) to the page's own action. */
export function IntentButton({
  intent,
  fields = {},
  danger = false,
  label,
  children,
}: {
  intent: string;
  fields?: Record<string, string | number>;
  danger?: boolean;
  label?: string;
  children: ReactNode;
}) {
  const Button = danger ? DangerButton : QuietButton;
  return (
    <Form method="post">
      <input type="hidden" name="intent" value={intent} />
      {Object.entries(fields).map(([k, v]) => (
        <input key={k} type="hidden" name={k} value={v} />
      ))}
      <Button type="submit" aria-label={label}>
        {children}
      </Button>
    </Form>
  );
}
