import { z } from 'zod';
import type { CalculationId } from './ids';
import { calculationSchemas } from './schemas';

/**
 * The JSON Schema of what a caller may send for one calculation. `io: 'input'` keeps fields with a
 * default optional; zod's default, 'output', would list them as required.
 */
export function inputJsonSchema(id: CalculationId): Record<string, unknown> {
  return z.toJSONSchema(calculationSchemas[id], { io: 'input' }) as Record<string, unknown>;
}
