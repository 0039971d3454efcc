import type { ButtonHTMLAttributes, InputHTMLAttributes, ReactNode, Ref, SelectHTMLAttributes } from "react";
import Link from "next/link";

/** Small presentational building blocks shared by every page. */

export function cx(...parts: (string | false | null | undefined)[]): string {
  return parts.filter(Boolean).join(" ");
}

type ButtonVariant = "primary" | "secondary" | "danger" | "ghost";

const BUTTON_VARIANTS: Record<ButtonVariant, string> = {
  primary: "bg-action text-action-ink hover:bg-action-hover border border-transparent",
  secondary: "bg-surface text-ink border border-line hover:bg-surface-muted",
  danger: "bg-surface text-danger border border-danger/60 hover:bg-danger-soft",
  ghost: "bg-transparent text-ink border border-transparent hover:bg-surface-muted",
};

export function buttonClasses(variant: ButtonVariant = "primary", extra?: string): string {
  return cx(
    "inline-flex items-center justify-center gap-2 rounded-md px-4 py-2 text-sm font-semibold transition-colors disabled:cursor-not-allowed disabled:opacity-60",
    BUTTON_VARIANTS[variant],
    extra,
  );
}

export function Button({
  variant = "primary",
  className,
  type = "button",
  ...rest
}: ButtonHTMLAttributes<HTMLButtonElement> & { variant?: ButtonVariant }) {
  return <button type={type} className={buttonClasses(variant, className)} {...rest} />;
}

export function ButtonLink({ href, variant = "primary", children, className }: { href: string; variant?: ButtonVariant; children: ReactNode; className?: string }) {
  return (
    <Link href={href} className={buttonClasses(variant, className)}>
      {children}
    </Link>
  );
}

const inputClasses =
  "block w-full rounded-md border border-line bg-surface px-3 py-2 text-sm text-ink placeholder:text-ink-muted/70 aria-[invalid=true]:border-danger";
const compactInputClasses = "rounded-md border border-line bg-surface px-2 py-1.5 text-sm";

/** What every labelled field shares: its id, label, unit, hint and error. */
interface FieldProps {
  id: string;
  label: ReactNode;
  /** Shown in brackets after the label, in the mono face ("[N/m]"). */
  unit?: ReactNode;
  hint?: ReactNode;
  hintTestId?: string;
  error?: string;
  /** The small form of a toolbar (a list's filters): a muted small label and a tighter control. */
  compact?: boolean;
}

/** The hint and error ids a control is described by (aria-describedby). */
function describedBy({ id, hint, error }: Pick<FieldProps, "id" | "hint" | "error">): string | undefined {
  return [hint ? `${id}-hint` : null, error ? `${id}-error` : null].filter(Boolean).join(" ") || undefined;
}

/** A field's label above its control, its hint and its error below, tied to it through aria-describedby. */
function Field({ id, label, unit, hint, hintTestId, error, compact, children }: FieldProps & { children: ReactNode }) {
  return (
    <div className="space-y-1">
      <label htmlFor={id} className={compact ? "block text-xs font-medium text-ink-muted" : "block text-sm font-medium text-ink"}>
        {label}
        {unit !== undefined ? (
          <>
            {" "}
            <span className="font-mono text-xs text-ink-muted">[{unit}]</span>
          </>
        ) : null}
      </label>
      {children}
      {hint ? (
        <p id={`${id}-hint`} className="text-xs text-ink-muted" data-testid={hintTestId}>
          {hint}
        </p>
      ) : null}
      <FieldError id={id} message={error} />
    </div>
  );
}

/** A field's error, announced; its id is `${id}-error` (what the control's aria-describedby names). */
export function FieldError({ id, message }: { id: string; message?: string }) {
  if (!message) return null;
  return (
    <p id={`${id}-error`} className="text-sm font-medium text-danger" role="alert">
      {message}
    </p>
  );
}

/** A field's props split into the frame's (label, unit, hint, error) and the control's, which gets the id, the error state and what describes it. */
function splitField<Control>({ id, label, unit, hint, hintTestId, error, compact, ...control }: FieldProps & Control) {
  return {
    field: { id, label, unit, hint, hintTestId, error, compact },
    control: { id, "aria-invalid": error ? true : undefined, "aria-describedby": describedBy({ id, hint, error }), className: compact ? compactInputClasses : inputClasses, ...control },
  };
}

/** A labelled input with its hint and error tied to it through aria-describedby. */
export function TextField(props: InputHTMLAttributes<HTMLInputElement> & FieldProps & { ref?: Ref<HTMLInputElement> }) {
  const { field, control } = splitField(props);
  return (
    <Field {...field}>
      <input {...control} />
    </Field>
  );
}

/** A labelled select, like TextField. */
export function SelectField({ children, ...props }: SelectHTMLAttributes<HTMLSelectElement> & FieldProps & { ref?: Ref<HTMLSelectElement>; children: ReactNode }) {
  const { field, control } = splitField(props);
  return (
    <Field {...field}>
      <select {...control}>{children}</select>
    </Field>
  );
}

/**
 * A set of checkboxes under one legend (token scopes, webhook events, an axis's choices), its error
 * tied to it. The selection keeps the options' order, whatever order they were ticked in.
 */
export function CheckboxGroup<Value extends string>({
  id,
  legend,
  options,
  selected,
  onChange,
  error,
  inline,
  valuesAsCode,
  className,
}: {
  id: string;
  legend: string;
  options: readonly { value: Value; label: ReactNode }[];
  selected: readonly Value[];
  onChange: (selected: Value[]) => void;
  error?: string;
  /** Options side by side (short labels) instead of one a line. */
  inline?: boolean;
  /** Each option reads as its value in the code face, a dash, then its label (scopes, event types). */
  valuesAsCode?: boolean;
  className?: string;
}) {
  const toggle = (value: Value, on: boolean) => onChange(options.map((option) => option.value).filter((candidate) => (candidate === value ? on : selected.includes(candidate))));
  return (
    <fieldset className={cx(inline ? undefined : "space-y-2", className)} aria-describedby={error ? `${id}-error` : undefined}>
      <legend className="text-sm font-medium">{legend}</legend>
      <div className={inline ? "mt-1 flex flex-wrap gap-4" : "space-y-2"}>
        {options.map((option) => (
          <label key={option.value} className={cx("flex gap-2 text-sm", inline ? "items-center" : "items-start")}>
            <input type="checkbox" checked={selected.includes(option.value)} onChange={(event) => toggle(option.value, event.target.checked)} className={cx("h-4 w-4 accent-[var(--kd-action)]", !inline && "mt-0.5")} />
            {valuesAsCode ? (
              <span>
                <span className="font-mono">{option.value}</span> <span className="text-ink-muted">— {option.label}</span>
              </span>
            ) : (
              option.label
            )}
          </label>
        ))}
      </div>
      <FieldError id={id} message={error} />
    </fieldset>
  );
}

export function Card({ title, actions, children, className }: { title?: ReactNode; actions?: ReactNode; children: ReactNode; className?: string }) {
  return (
    <section className={cx("min-w-0 rounded-lg border border-line bg-surface p-5 shadow-[0_1px_0_var(--kd-line)]", className)}>
      {title || actions ? (
        <div className="mb-4 flex flex-wrap items-center justify-between gap-3">
          {title ? <h2 className="text-base font-semibold tracking-tight">{title}</h2> : <span />}
          {actions}
        </div>
      ) : null}
      {children}
    </section>
  );
}

export function Alert({ tone = "danger", children }: { tone?: "danger" | "ok" | "info"; children: ReactNode }) {
  const tones = {
    danger: "border-danger/50 bg-danger-soft text-danger",
    ok: "border-ok/50 bg-ok-soft text-ok",
    info: "border-line bg-warn-soft text-ink",
  } as const;
  return (
    <div role={tone === "danger" ? "alert" : "status"} className={cx("rounded-md border px-4 py-3 text-sm font-medium", tones[tone])}>
      {children}
    </div>
  );
}

export function PageHeading({ eyebrow, title, children }: { eyebrow?: ReactNode; title: ReactNode; children?: ReactNode }) {
  return (
    <div className="mb-8 space-y-2">
      {eyebrow ? <p className="font-mono text-xs uppercase tracking-[0.18em] text-kick">{eyebrow}</p> : null}
      <h1 className="text-3xl font-bold tracking-tight">{title}</h1>
      {children ? <div className="max-w-2xl text-ink-muted">{children}</div> : null}
    </div>
  );
}

export function RoleBadge({ role }: { role: string }) {
  const tones: Record<string, string> = {
    owner: "border-kick/50 text-kick",
    engineer: "border-action/50 text-action",
    finance: "border-ok/50 text-ok",
    admin: "border-ink/40 text-ink",
  };
  return (
    <span className={cx("inline-flex items-center rounded-full border px-2 py-0.5 font-mono text-xs", tones[role] ?? "border-line text-ink-muted")}>
      {role}
    </span>
  );
}

export function EmptyState({ children }: { children: ReactNode }) {
  return <p className="rounded-md border border-dashed border-line px-4 py-6 text-center text-sm text-ink-muted">{children}</p>;
}

export function LoadingRows({ label }: { label: string }) {
  return (
    <p className="py-4 text-sm text-ink-muted" role="status">
      Loading {label}…
    </p>
  );
}

/** A narrow centred panel for the sign-in family of pages. */
export function AuthPanel({ title, intro, children }: { title: string; intro?: ReactNode; children: ReactNode }) {
  return (
    <div className="mx-auto w-full max-w-md py-12">
      <div className="rounded-xl border border-line bg-surface p-8 shadow-sm">
        <h1 className="text-2xl font-bold tracking-tight">{title}</h1>
        {intro ? <div className="mt-2 text-sm text-ink-muted">{intro}</div> : null}
        <div className="mt-6">{children}</div>
      </div>
    </div>
  );
}
