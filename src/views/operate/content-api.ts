import { api } from '../../api/client';

/** Response shapes of the operator content routes (server/routes/learning.ts). */
export interface DrillOption {
  id: string;
  title: string;
}

export interface OperatorArea {
  id: string;
  name: string;
  summary: string;
  methods: string[];
  validityMonths: number;
  order: number;
  lessonCount: number;
  drills: DrillOption[];
  /** The values in content/areas.json as last loaded. */
  fileValues: { name: string | null; validityMonths: number | null };
  editedByOperator: boolean;
  updatedAt: string;
}

export interface MixEntry {
  drill: string;
  count: number;
}

export interface BlueprintSettings {
  title: string;
  timeLimitMinutes: number;
  passMarkPct: number;
  questionCount: number;
  mix: MixEntry[];
}

export interface OperatorBlueprint extends BlueprintSettings {
  areaId: string;
  areaName: string;
  availableDrills: DrillOption[];
  /** The values in content/blueprints/<area>.json as last loaded. */
  fileValues: BlueprintSettings | null;
  editedByOperator: boolean;
  updatedAt: string;
}

/** What the forms send: empty number inputs go as null, and the server names them. */
export type Draft<T> = { [K in keyof T]: T[K] extends number ? number | null : T[K] };

export const contentApi = {
  areas: () => api.get<{ areas: OperatorArea[] }>('/api/operator/areas'),
  saveArea: (areaId: string, settings: { name: string; validityMonths: number | null }) =>
    api.put<{ area: OperatorArea }>(`/api/operator/areas/${encodeURIComponent(areaId)}`, settings),
  blueprints: () => api.get<{ blueprints: OperatorBlueprint[] }>('/api/operator/blueprints'),
  saveBlueprint: (areaId: string, settings: Omit<Draft<BlueprintSettings>, 'mix'> & { mix: Draft<MixEntry>[] }) =>
    api.put<{ blueprint: OperatorBlueprint }>(`/api/operator/blueprints/${encodeURIComponent(areaId)}`, settings),
};
