import { computed, inject, ref, type InjectionKey } from 'vue';
import type { ApiError } from '../api/client';
import type { CalculationListing } from '../stores/calculations';
import { FORM_HINTS, type AlternativeGroup } from '../components/calculators/form-hints';
import {
  buildFields,
  collectInputs,
  initialValues,
  isBlank,
  joinPath,
  knownPaths,
  placeProblem,
  removeRow as removeRowAt,
  spreadInputs,
  type FieldNode,
  type FormValues,
  type PlacedProblem,
  type RowCounts,
} from '../components/calculators/form-model';
import type { CarriedValue, FormDraft } from './useCalculationChain';

export type LayoutItem =
  | { type: 'field'; key: string; node: FieldNode }
  | { type: 'alternatives'; key: string; group: AlternativeGroup; nodes: FieldNode[] };

export interface CarriedMark {
  from: string;
  text: string;
}

/**
 * The state of one generated calculator form: the text in every field (kept exactly as typed,
 * whatever the server says), which alternative of each "give one of" choice is picked, values
 * carried in from earlier results, and problems placed beside their fields.
 */
export function useCalculationForm(calc: CalculationListing) {
  const fields = buildFields(calc);
  const hints = FORM_HINTS[calc.id] ?? {};
  const groupOf = new Map<string, AlternativeGroup>();
  for (const group of hints.alternatives ?? []) for (const option of group.options) for (const name of option.fields) groupOf.set(name, group);

  const values = ref<FormValues>({});
  const rows = ref<RowCounts>({});
  const choices = ref<Record<string, string>>({});
  const carried = ref<Record<string, CarriedMark>>({});
  const problems = ref<PlacedProblem[]>([]);
  /** A message that belongs to no field (service down, or a 400 without field detail). */
  const formMessage = ref<string | null>(null);
  /** True when the problems come from the pre-check, not from the server. */
  const problemsFromCheck = ref(false);

  function defaultChoices() {
    return Object.fromEntries((hints.alternatives ?? []).map((group) => [group.id, group.options[0].id]));
  }

  function reset() {
    const start = initialValues(fields);
    values.value = start.values;
    rows.value = start.rows;
    choices.value = defaultChoices();
    carried.value = {};
    clearProblems();
  }

  function clearProblems() {
    problems.value = [];
    formMessage.value = null;
    problemsFromCheck.value = false;
  }

  /** Whether a top-level input is in play under the current choices. */
  function isActive(name: string): boolean {
    const group = groupOf.get(name);
    if (group && !group.options.find((option) => option.id === choices.value[group.id])?.fields.includes(name)) return false;
    const rule = hints.showWhen?.[name];
    if (rule?.field && !(rule.equals ?? []).includes(values.value[rule.field] ?? '')) return false;
    if (rule?.activeField && !isActive(rule.activeField)) return false;
    return true;
  }

  /** Needed now: required by the schema, or the field of a picked alternative. */
  function isRequired(node: FieldNode, topLevel: boolean): boolean {
    if (node.required) return true;
    return topLevel && isActive(node.name) && (groupOf.has(node.name) || Boolean(hints.showWhen?.[node.name]));
  }

  const layout = computed<LayoutItem[]>(() => {
    const items: LayoutItem[] = [];
    const placed = new Set<string>();
    for (const node of fields) {
      const group = groupOf.get(node.name);
      if (!group) {
        items.push({ type: 'field', key: node.name, node });
      } else if (!placed.has(group.id)) {
        placed.add(group.id);
        const members = new Set(group.options.flatMap((option) => option.fields));
        items.push({ type: 'alternatives', key: `choice-${group.id}`, group, nodes: fields.filter((f) => members.has(f.name)) });
      }
    }
    return items;
  });

  function inputs(): Record<string, unknown> {
    return collectInputs(fields, '', values.value, rows.value, (node) => isActive(node.name));
  }

  function setValue(path: string, text: string) {
    values.value = { ...values.value, [path]: text };
  }

  function choose(groupId: string, optionId: string) {
    choices.value = { ...choices.value, [groupId]: optionId };
  }

  function addRow(path: string) {
    rows.value = { ...rows.value, [path]: (rows.value[path] ?? 0) + 1 };
  }

  function removeRow(path: string, index: number) {
    const nextValues = { ...values.value };
    const nextRows = { ...rows.value };
    removeRowAt(path, index, nextValues, nextRows);
    values.value = nextValues;
    rows.value = nextRows;
    clearProblems();
  }

  /**
   * Picks, for each "give one of" choice, the alternative whose fields were just written, unless
   * the current one already holds something. For a saved run (`exact`), a choice none of whose
   * fields were given falls to the alternative that needs nothing, if there is one.
   */
  function chooseByContent(written: Iterable<string>, exact = false) {
    const filled = new Set(written);
    for (const group of hints.alternatives ?? []) {
      const current = group.options.find((option) => option.id === choices.value[group.id]);
      if (!exact && current?.fields.some((name) => values.value[name]?.trim())) continue;
      const match =
        group.options.find((option) => option.fields.some((name) => filled.has(name))) ??
        (exact ? group.options.find((option) => option.fields.length === 0) : undefined);
      if (match) choose(group.id, match.id);
    }
  }

  /** Replaces the whole form with a saved run's inputs. */
  function load(saved: Record<string, unknown>) {
    reset();
    const nextValues = { ...values.value };
    const nextRows = { ...rows.value };
    // Fields a run left out (optional ones) start blank rather than at their defaults, as saved.
    for (const node of fields) if (saved[node.name] === undefined && node.kind !== 'group' && node.kind !== 'groupList') nextValues[node.name] = '';
    const written = spreadInputs(fields, '', saved, nextValues, nextRows);
    values.value = nextValues;
    rows.value = nextRows;
    chooseByContent(written.map((path) => path.split('.')[0]), true);
  }

  /** Writes carried values into their fields and marks them, so people see what was filled. */
  function fill(carriedValues: CarriedValue[], from: string) {
    const next = { ...values.value };
    const marks = { ...carried.value };
    for (const value of carriedValues) {
      next[value.name] = value.text;
      marks[value.name] = { from, text: value.text };
    }
    values.value = next;
    carried.value = marks;
    chooseByContent(carriedValues.map((v) => v.name));
  }

  /** The mark for a field, while it still holds the carried value. */
  function carriedMark(path: string): CarriedMark | null {
    const mark = carried.value[path];
    return mark && values.value[path] === mark.text ? mark : null;
  }

  function snapshot(): FormDraft {
    return { values: { ...values.value }, rows: { ...rows.value }, choices: { ...choices.value } };
  }

  function restore(draft: FormDraft) {
    values.value = { ...values.value, ...draft.values };
    rows.value = { ...rows.value, ...draft.rows };
    choices.value = { ...choices.value, ...draft.choices };
  }

  /** Marks blank fields that are needed now; true when there are none. */
  function precheck(): boolean {
    clearProblems();
    const found: PlacedProblem[] = [];
    const need = (path: string, node: FieldNode) => {
      const message = node.kind === 'list' || node.kind === 'numberOrList' ? 'Enter at least one value.' : node.kind === 'choice' ? 'Choose one.' : 'Enter a value.';
      found.push({ path, serverPath: path, message, original: message });
    };
    const walk = (nodes: FieldNode[], prefix: string, topLevel: boolean) => {
      for (const node of nodes) {
        if (topLevel && !isActive(node.name)) continue;
        const path = joinPath(prefix, node.name);
        const required = isRequired(node, topLevel);
        if (node.kind === 'group') {
          if (required || !isBlank(node, path, values.value, rows.value)) walk(node.children ?? [], path, false);
        } else if (node.kind === 'groupList') {
          for (let index = 0; index < (rows.value[path] ?? 0); index += 1) walk(node.children ?? [], joinPath(path, index), false);
        } else if (required && isBlank(node, path, values.value, rows.value)) {
          need(path, node);
        }
      }
    };
    walk(fields, '', true);
    problems.value = found;
    problemsFromCheck.value = found.length > 0;
    return found.length === 0;
  }

  /** Places the server's field list beside the fields; the typed text is left exactly as it was. */
  function takeServerError(error: ApiError) {
    clearProblems();
    const onForm = knownPaths(fields, '', rows.value);
    problems.value = error.fields.map((problem) => {
      const placed = placeProblem(problem.field, problem.message, onForm);
      if (placed.path && !isActive(placed.path.split('.')[0])) return { ...placed, path: null };
      return placed;
    });
    if (problems.value.length === 0) formMessage.value = error.message;
  }

  function problemsAt(path: string): PlacedProblem[] {
    return problems.value.filter((problem) => problem.path === path);
  }

  /** The label of the field a problem points at, for the summary. */
  function labelOf(path: string | null): string {
    if (!path) return 'Inputs';
    const node = knownPaths(fields, '', rows.value).get(path);
    if (!node) return path;
    const parts = path.split('.');
    const row = parts.findIndex((part) => /^\d+$/.test(part));
    return row > 0 ? `${node.label} (row ${Number(parts[row]) + 1})` : node.label;
  }

  reset();

  return {
    calc,
    fields,
    layout,
    values,
    rows,
    choices,
    problems,
    problemsFromCheck,
    formMessage,
    reset,
    clearProblems,
    isActive,
    isRequired,
    inputs,
    setValue,
    choose,
    addRow,
    removeRow,
    load,
    fill,
    carriedMark,
    snapshot,
    restore,
    precheck,
    takeServerError,
    problemsAt,
    labelOf,
    fieldId: (path: string) => `calc-${calc.id}-${path.replace(/[^A-Za-z0-9_-]/g, '-')}`,
  };
}

export type CalculationForm = ReturnType<typeof useCalculationForm>;

export const CALCULATION_FORM: InjectionKey<CalculationForm> = Symbol('calculation-form');

export function useInjectedCalculationForm(): CalculationForm {
  const form = inject(CALCULATION_FORM);
  if (!form) throw new Error('A calculator field must sit inside a calculator form.');
  return form;
}
