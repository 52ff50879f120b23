import { formatValue } from './format';
import type { FieldNode } from './form-model';

export interface InputLine {
  path: string;
  label: string;
  value: string;
  /** Every digit as sent, for copying. */
  full: string;
  unit: string;
}

/** A value as typed, unless it carries more digits than anyone typed (a carried result). */
function asTyped(value: unknown): string {
  if (Array.isArray(value)) return `${value.map(asTyped).join(', ')} (${value.length} values)`;
  if (typeof value === 'number' && String(value).replace(/^-|\./g, '').length > 8) return formatValue(value).text;
  return String(value);
}

/** The inputs a calculation ran with, one line per value, labelled as on the form. */
export function describeInputs(fields: FieldNode[], inputs: Record<string, unknown>, prefix = '', context = ''): InputLine[] {
  const lines: InputLine[] = [];
  for (const node of fields) {
    const value = inputs[node.name];
    if (value === undefined) continue;
    const path = prefix ? `${prefix}.${node.name}` : node.name;
    const label = context ? `${context} — ${node.label}` : node.label;
    if (node.kind === 'group' && value && typeof value === 'object') {
      lines.push(...describeInputs(node.children ?? [], value as Record<string, unknown>, path, node.label));
    } else if (node.kind === 'groupList' && Array.isArray(value)) {
      value.forEach((row, index) => {
        if (row && typeof row === 'object') {
          lines.push(...describeInputs(node.children ?? [], row as Record<string, unknown>, `${path}.${index}`, `${node.itemLabel} ${index + 1}`));
        }
      });
    } else if (node.kind === 'choice') {
      const text = node.options?.find((option) => option.value === value)?.label ?? String(value);
      lines.push({ path, label, value: text, full: String(value), unit: '' });
    } else {
      const full = Array.isArray(value) ? value.map(String).join(', ') : String(value);
      lines.push({ path, label, value: asTyped(value), full, unit: node.unit });
    }
  }
  return lines;
}
