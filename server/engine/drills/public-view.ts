import type { DataTable, DrillScenario, DrillTemplate, GivenValue } from './types';

/** What the client may see of an attempt before it is graded: the sheet and the blank answer boxes. */
export interface PublicAttemptView {
  scenario: {
    templateId: string;
    title: string;
    intro: string;
    given: GivenValue[];
    tables: DataTable[];
  };
  fields: { key: string; label: string; unit: string }[];
}

/**
 * Builds the attempt view field by field from an allow-list, so nothing the server holds (the
 * typed scenario data, the seed, expected values, tolerances, recompute functions) can slip in.
 */
export function publicAttemptView<D>(template: DrillTemplate<D>, scenario: DrillScenario<D>): PublicAttemptView {
  if (scenario.templateId !== template.id) {
    throw new Error(`Scenario belongs to drill ${scenario.templateId}, not ${template.id}.`);
  }
  return {
    scenario: {
      templateId: scenario.templateId,
      title: scenario.title,
      intro: scenario.intro,
      given: scenario.given.map((g) => ({ key: g.key, label: g.label, value: g.value, unit: g.unit })),
      tables: scenario.tables.map((t) => ({
        key: t.key,
        title: t.title,
        columns: t.columns.map((c) => ({ key: c.key, label: c.label, unit: c.unit })),
        rows: t.rows.map((row) => [...row]),
      })),
    },
    fields: template.fields.map((f) => ({ key: f.key, label: f.label, unit: f.unit })),
  };
}
