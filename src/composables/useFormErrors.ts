import { ref } from 'vue';
import { ApiError } from '../api/client';

/**
 * Keeps the server's per-field messages next to their inputs and any remaining message as a
 * form-level notice, so every form reports problems the same way.
 */
export function useFormErrors<Field extends string>(fields: readonly Field[]) {
  const fieldErrors = ref<Partial<Record<Field, string>>>({});
  const formError = ref<string | null>(null);
  const lastError = ref<ApiError | null>(null);

  function reset() {
    fieldErrors.value = {};
    formError.value = null;
    lastError.value = null;
  }

  function setField(field: Field, message: string) {
    fieldErrors.value = { ...fieldErrors.value, [field]: message };
  }

  /** Spreads an error over the fields it names; anything unnamed becomes the form-level message. */
  function take(error: unknown, describe: (error: ApiError) => string | null = () => null) {
    reset();
    if (!(error instanceof ApiError)) {
      formError.value = 'Something unexpected went wrong. Try again in a moment.';
      return;
    }
    lastError.value = error;
    const unmatched: string[] = [];
    for (const problem of error.fields) {
      if ((fields as readonly string[]).includes(problem.field)) setField(problem.field as Field, problem.message);
      else unmatched.push(problem.message);
    }
    const special = describe(error);
    if (special) formError.value = special;
    else if (unmatched.length) formError.value = unmatched.join(' ');
    else if (!error.fields.length) formError.value = error.message;
  }

  return { fieldErrors, formError, lastError, reset, setField, take };
}
