import { reactive, ref, type UnwrapRef } from 'vue';
import type { z } from 'zod';
import { fieldIssues } from '../api/http';

type Labels<T> = Partial<Record<keyof T & string, string>>;

/**
 * A form model checked with a shared zod schema. Errors are kept per field
 * (first path segment) so each one can be shown beside its input; server
 * `validation_failed` details land in the same place.
 */
export function useZodForm<S extends z.ZodType, T extends object>(schema: S, initial: () => T, labels: Labels<T> = {}) {
  const model = reactive(initial()) as UnwrapRef<T>;
  const errors = ref<Record<string, string>>({});
  const formError = ref<string | null>(null);

  function phrase(field: string, msg: string): string {
    const label = labels[field as keyof T & string];
    // Shared schemas word messages as fragments ("is required"); put the field's name in front.
    return label && /^[a-z]/.test(msg) ? `${label} ${msg}` : msg;
  }

  function setIssues(issues: { path: string; message: string }[]): void {
    const next: Record<string, string> = {};
    let general: string | null = null;
    for (const issue of issues) {
      const field = issue.path.split(/[.[]/)[0] ?? '';
      if (field && field in (model as object)) {
        next[field] ??= phrase(field, issue.message);
      } else {
        general ??= issue.message;
      }
    }
    errors.value = next;
    formError.value = general;
  }

  /** Check the model; returns the parsed value or null (errors then set). */
  function validate(transform?: (m: T) => unknown): z.output<S> | null {
    const input = transform ? transform(model as T) : model;
    const result = schema.safeParse(input);
    if (result.success) {
      errors.value = {};
      formError.value = null;
      return result.data;
    }
    setIssues(
      result.error.issues.map((i) => ({
        path: i.path.map(String).join('.'),
        message: i.message,
      })),
    );
    return null;
  }

  /** Show a server `validation_failed` answer beside the fields; returns true when it was one. */
  function applyServerError(e: unknown): boolean {
    const issues = fieldIssues(e);
    if (issues.length === 0) return false;
    setIssues(issues);
    return true;
  }

  function setFieldError(field: keyof T & string, msg: string): void {
    errors.value = { ...errors.value, [field]: phrase(field, msg) };
  }

  function clearError(field: keyof T & string): void {
    if (!(field in errors.value)) return;
    const next = { ...errors.value };
    delete next[field];
    errors.value = next;
  }

  function reset(): void {
    Object.assign(model as object, initial());
    errors.value = {};
    formError.value = null;
  }

  /** Props for an n-form-item: `v-bind="field('name')"`. */
  function field(name: keyof T & string): { feedback: string | undefined; validationStatus: 'error' | undefined } {
    const msg = errors.value[name];
    return { feedback: msg, validationStatus: msg ? 'error' : undefined };
  }

  return { model, errors, formError, validate, applyServerError, setFieldError, clearError, reset, field };
}
