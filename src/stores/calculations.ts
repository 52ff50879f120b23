import { defineStore } from 'pinia';
import { computed, ref } from 'vue';
import { api } from '../api/client';

/** One input as `GET /api/calculations` describes it, keyed by dotted path (`[]` for array items). */
export interface InputMeta {
  label: string;
  unit: string;
  description?: string;
  /** For choice fields: value → label, in display order. */
  options?: Record<string, string>;
  required: boolean;
  default?: unknown;
}

export interface OutputMeta {
  label: string;
  unit: string;
}

/** The subset of JSON Schema that zod writes for our input schemas. */
export interface JsonSchema {
  type?: string | string[];
  properties?: Record<string, JsonSchema>;
  required?: string[];
  items?: JsonSchema;
  anyOf?: JsonSchema[];
  enum?: unknown[];
  default?: unknown;
  minimum?: number;
  maximum?: number;
  exclusiveMinimum?: number;
  exclusiveMaximum?: number;
  multipleOf?: number;
  minItems?: number;
  maxItems?: number;
  label?: string;
  unit?: string;
  description?: string;
}

export interface CalculationListing {
  id: string;
  title: string;
  description: string;
  inputSchema: JsonSchema;
  inputs: Record<string, InputMeta>;
  outputs: Record<string, OutputMeta>;
}

export type ResultValue = number | boolean | number[] | Record<string, unknown>[] | string | null;

export interface CalculationStep {
  key: string;
  label: string;
  /** LaTeX. */
  equation: string;
  value: number | boolean;
  unit: string;
  source: string;
  dependsOn: string[];
}

export interface CalculationResponse {
  id: string;
  results: Record<string, ResultValue>;
  steps: CalculationStep[];
  warnings: string[];
  run?: { id: string; createdAt: string };
}

export interface SavedRun {
  id: string;
  calculationId: string;
  label: string | null;
  inputs: Record<string, unknown>;
  results: Record<string, ResultValue>;
  warnings: string[];
  createdAt: string;
}

export interface RunPage {
  total: number;
  runs: SavedRun[];
}

/**
 * The calculation listing (fetched once per visit: the schemas never change while the server
 * runs) and the typed calls for running calculations and managing saved runs.
 */
export const useCalculationsStore = defineStore('calculations', () => {
  const listing = ref<CalculationListing[] | null>(null);
  let loading: Promise<CalculationListing[]> | null = null;

  const byId = computed(() => new Map((listing.value ?? []).map((calc) => [calc.id, calc])));

  /** Resolves with the listing; a failed fetch is not cached, so the next call tries again. */
  function loadListing(): Promise<CalculationListing[]> {
    if (listing.value) return Promise.resolve(listing.value);
    loading ??= api
      .get<{ calculations: CalculationListing[] }>('/api/calculations')
      .then((body) => {
        listing.value = body.calculations;
        return body.calculations;
      })
      .finally(() => {
        loading = null;
      });
    return loading;
  }

  function run(id: string, inputs: Record<string, unknown>, options: { save?: boolean; label?: string } = {}) {
    const body: { inputs: Record<string, unknown>; save?: boolean; label?: string } = { inputs };
    if (options.save) body.save = true;
    if (options.save && options.label?.trim()) body.label = options.label.trim();
    return api.post<CalculationResponse>(`/api/calculations/${encodeURIComponent(id)}`, body);
  }

  function listRuns(query: { page: number; pageSize: number; calculationId?: string | null }) {
    const params = new URLSearchParams({ page: String(query.page), pageSize: String(query.pageSize) });
    if (query.calculationId) params.set('calculationId', query.calculationId);
    return api.get<RunPage>(`/api/calculation-runs?${params}`);
  }

  async function getRun(runId: string): Promise<SavedRun> {
    return (await api.get<{ run: SavedRun }>(`/api/calculation-runs/${encodeURIComponent(runId)}`)).run;
  }

  function deleteRun(runId: string) {
    return api.del(`/api/calculation-runs/${encodeURIComponent(runId)}`);
  }

  return { listing, byId, loadListing, run, listRuns, getRun, deleteRun };
});
