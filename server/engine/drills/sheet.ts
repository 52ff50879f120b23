/** Building blocks for the field data sheets the generators produce. All names are invented. */
import type { Draw } from './random';
import type { DataTable, DrillScenario, GivenValue, TableColumn } from './types';

/** Invented place names for plants and monitoring stations. */
export const PLACES = [
  'Kestrel Ridge',
  'Alder Flats',
  'Marrow Creek',
  'Tamsin Point',
  'Orrin Valley',
  'Halloway Bend',
  'Sable Lake',
  'Juniper Gap',
  'Wrenfield',
  'Quarry Hollow',
  'Bramblewood',
  'Fennick Hill',
  'Cold Spur',
  'Larkmoor',
  'Pellow Junction',
  'Ashgrove Mill',
] as const;

export type SourceKind = 'boiler' | 'turbine' | 'kiln' | 'dryer' | 'incinerator' | 'heater';

const SOURCES: Record<SourceKind, readonly string[]> = {
  boiler: ['Boiler 1', 'Boiler 2', 'Boiler 3', 'Package boiler B', 'Auxiliary boiler'],
  turbine: ['Combustion turbine 1', 'Combustion turbine 2', 'Peaking turbine A'],
  kiln: ['Kiln 1', 'Kiln 2', 'Lime kiln'],
  dryer: ['Dryer 3', 'Rotary dryer', 'Aggregate dryer'],
  incinerator: ['Incinerator', 'Waste combustor 1'],
  heater: ['Process heater H-4', 'Crude heater H-1', 'Reboiler heater'],
};

/** An invented plant and emission unit, e.g. "Kestrel Ridge Boiler 2". */
export function siteName(draw: Draw, kinds: readonly SourceKind[] = ['boiler', 'kiln', 'dryer', 'incinerator', 'heater']): string {
  return `${draw.pick(PLACES)} ${draw.pick(SOURCES[draw.pick(kinds)])}`;
}

export function given(key: string, label: string, value: number | string, unit = ''): GivenValue {
  return { key, label, value, unit };
}

export function column(key: string, label: string, unit = ''): TableColumn {
  return { key, label, unit };
}

export function table(key: string, title: string, columns: TableColumn[], rows: (number | string)[][]): DataTable {
  return { key, title, columns, rows };
}

export function scenario<D>(
  templateId: string,
  seed: number,
  parts: { title: string; intro: string; given: GivenValue[]; tables?: DataTable[]; data: D },
): DrillScenario<D> {
  return { templateId, seed, title: parts.title, intro: parts.intro, given: parts.given, tables: parts.tables ?? [], data: parts.data };
}
