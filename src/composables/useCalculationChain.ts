import { defineStore } from 'pinia';
import { ref, watch } from 'vue';
import type { CalculationListing, CalculationStep, ResultValue } from '../stores/calculations';
import { useSessionStore } from '../stores/session';
import { buildFields, textFor, type FieldNode, type FormValues, type RowCounts } from '../components/calculators/form-model';

/** The latest result of one calculation in this browser session. */
export interface ChainEntry {
  calculationId: string;
  title: string;
  inputs: Record<string, unknown>;
  results: Record<string, ResultValue>;
  warnings?: string[];
  steps?: CalculationStep[];
  /** Set when the entry is a saved run reopened as stored. */
  savedRun?: { createdAt: string; label: string | null };
  at: string;
}

/** What someone had typed into a calculator, kept while they visit the others. */
export interface FormDraft {
  values: FormValues;
  rows: RowCounts;
  choices: Record<string, string>;
}

export interface CarriedValue {
  name: string;
  label: string;
  unit: string;
  /** Form text for the field. */
  text: string;
  /** Where it came from in the source: a result or one of its inputs. */
  kind: 'result' | 'input';
}

export interface ChainOffer {
  source: ChainEntry;
  values: CarriedValue[];
}

/**
 * A result key that stands in for an input of the same meaning under another name. Method 4 says
 * to use the lower of measured and saturation moisture, so that value is carried when it exists.
 */
const PREFERRED_RESULT: Record<string, string[]> = {
  moistureFraction: ['moistureFractionToUse', 'moistureFraction'],
};

const CARRIABLE = new Set(['number', 'list', 'numberOrList', 'choice']);
const STORAGE_PREFIX = 'pw-calculation-chain:';

function valueFor(field: FieldNode, entry: ChainEntry): { value: unknown; kind: 'result' | 'input' } | null {
  for (const key of PREFERRED_RESULT[field.name] ?? [field.name]) {
    if (entry.results[key] !== undefined && entry.results[key] !== null) return { value: entry.results[key], kind: 'result' };
  }
  if (entry.inputs[field.name] !== undefined) return { value: entry.inputs[field.name], kind: 'input' };
  return null;
}

/** The fields of `target` that an earlier result (or the inputs behind it) can fill, by matching names. */
export function carriedValues(target: FieldNode[], entry: ChainEntry, onlyResults = false): CarriedValue[] {
  const carried: CarriedValue[] = [];
  for (const field of target) {
    if (!CARRIABLE.has(field.kind)) continue;
    const found = valueFor(field, entry);
    if (!found || (onlyResults && found.kind !== 'result')) continue;
    const text = textFor(field, found.value);
    if (text !== null) carried.push({ name: field.name, label: field.label, unit: field.unit, text, kind: found.kind });
  }
  return carried;
}

/**
 * Keeps each calculation's latest result (and what was typed into each form) for this browser
 * session, per signed-in person, so one calculator's results can fill the next one's inputs.
 */
export const useCalculationChain = defineStore('calculation-chain', () => {
  const session = useSessionStore();
  const latest = ref<Record<string, ChainEntry>>({});
  const drafts = ref<Record<string, FormDraft>>({});
  let storageKey: string | null = null;

  function read(key: string) {
    try {
      const saved = JSON.parse(sessionStorage.getItem(key) ?? 'null') as { latest?: unknown; drafts?: unknown } | null;
      latest.value = (saved?.latest as Record<string, ChainEntry>) ?? {};
      drafts.value = (saved?.drafts as Record<string, FormDraft>) ?? {};
    } catch {
      latest.value = {};
      drafts.value = {};
    }
  }

  watch(
    () => session.user?.id ?? null,
    (userId) => {
      storageKey = userId ? `${STORAGE_PREFIX}${userId}` : null;
      if (storageKey) read(storageKey);
      else {
        latest.value = {};
        drafts.value = {};
      }
    },
    { immediate: true },
  );

  watch(
    [latest, drafts],
    () => {
      if (!storageKey) return;
      try {
        sessionStorage.setItem(storageKey, JSON.stringify({ latest: latest.value, drafts: drafts.value }));
      } catch {
        // Storage may be full or refused; the chain still works for this page's lifetime.
      }
    },
    { deep: true },
  );

  function record(entry: Omit<ChainEntry, 'at'> & { at?: string }) {
    latest.value = { ...latest.value, [entry.calculationId]: { ...entry, at: entry.at ?? new Date().toISOString() } };
  }

  function saveDraft(calculationId: string, draft: FormDraft) {
    drafts.value = { ...drafts.value, [calculationId]: draft };
  }

  function clearDraft(calculationId: string) {
    const next = { ...drafts.value };
    delete next[calculationId];
    drafts.value = next;
  }

  /** Earlier results that can fill `target`'s fields, newest first. */
  function offersFor(target: CalculationListing, fields: FieldNode[]): ChainOffer[] {
    return Object.values(latest.value)
      .filter((entry) => entry.calculationId !== target.id)
      .sort((a, b) => b.at.localeCompare(a.at))
      .map((source) => ({ source, values: carriedValues(fields, source) }))
      .filter((offer) => offer.values.length > 0);
  }

  /**
   * Where this entry's results can go next: calculations that take one of its results, and ones
   * not yet run this session that take one of the inputs behind it (isokinetic's Vm(std) feeds the
   * particulate loading, though it is an input there).
   */
  function targetsOf(entry: ChainEntry, listing: CalculationListing[]): { calc: CalculationListing; values: CarriedValue[] }[] {
    return listing
      .filter((calc) => calc.id !== entry.calculationId)
      .map((calc) => ({ calc, fields: buildFields(calc) }))
      .map(({ calc, fields }) => ({ calc, takesResults: carriedValues(fields, entry, true).length > 0, values: carriedValues(fields, entry) }))
      .filter(({ calc, takesResults, values }) => takesResults || (!latest.value[calc.id] && values.length > 0))
      // Calculations that take a result are the usual next step; list them first.
      .sort((a, b) => Number(b.takesResults) - Number(a.takesResults))
      .map(({ calc, values }) => ({ calc, values }));
  }

  /**
   * What to pour into `target` when it is opened from `fromId`'s results: everything that source
   * carries, then, for fields it does not cover, the newest other result that does.
   */
  function fillPlan(target: CalculationListing, fields: FieldNode[], fromId: string): ChainOffer[] {
    const primary = latest.value[fromId];
    if (!primary || primary.calculationId === target.id) return [];
    const plan: ChainOffer[] = [{ source: primary, values: carriedValues(fields, primary) }];
    const covered = new Set(plan[0].values.map((v) => v.name));
    for (const offer of offersFor(target, fields)) {
      if (offer.source.calculationId === fromId) continue;
      const values = offer.values.filter((v) => !covered.has(v.name));
      values.forEach((v) => covered.add(v.name));
      if (values.length) plan.push({ source: offer.source, values });
    }
    return plan.filter((offer) => offer.values.length > 0);
  }

  return { latest, drafts, record, saveDraft, clearDraft, offersFor, targetsOf, fillPlan };
});
