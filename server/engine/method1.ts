/** Method 1 (40 CFR Part 60, App. A-1): traverse point locations in circular stacks. */
import type { CalculationInputParsed } from '../../shared/calculations/schemas';
import { fmt, type Worksheet } from './worksheet';

/**
 * Method 1, §11.3.2.1 (section as given in our brief; check it and the nozzle-diameter
 * alternative, "or the nozzle inside diameter, whichever is larger", against the method text):
 * no traverse point closer than 1.00 in. to the wall in stacks over 24 in., nor 0.50 in. in
 * stacks of 24 in. or less.
 */
const WALL_CLEARANCE_LARGE_STACK_IN = 1.0;
const WALL_CLEARANCE_SMALL_STACK_IN = 0.5;
const SMALL_STACK_MAX_DIAMETER_IN = 24;
/** Method 1 applies to stacks of 12 in. (0.30 m) and more; Method 1A covers 4–12 in. (from memory, check against Method 1, §1.2). */
const METHOD_1_MIN_DIAMETER_IN = 12;

const TABLE_SOURCE = 'Method 1, Table 1-2';
const RELOCATION_SOURCE = 'Method 1, §11.3.2.1';

export interface TraversePoint {
  index: number;
  percentOfDiameter: number;
  distanceFromWall_in: number;
  distanceFromPortEnd_in: number;
  relocated: boolean;
}

export function traversePoints(input: CalculationInputParsed<'traverse-points'>, w: Worksheet) {
  const diameter = input.stackDiameter_in;
  const count = input.pointsPerDiameter;
  const rings = count / 2;
  const clearance =
    diameter > SMALL_STACK_MAX_DIAMETER_IN ? WALL_CLEARANCE_LARGE_STACK_IN : WALL_CLEARANCE_SMALL_STACK_IN;
  const points: TraversePoint[] = [];

  if (diameter < METHOD_1_MIN_DIAMETER_IN) {
    w.warn(
      `A ${fmt(diameter)} in. stack is below the 12 in. where Method 1 applies; small ducts (4 to 12 in.) are laid out by Method 1A.`,
    );
  }

  for (let index = 1; index <= count; index++) {
    // Points run from the port-side wall across: the outermost ring first, then inward, then out again.
    const nearSide = index <= rings;
    const ring = nearSide ? rings - index + 1 : index - rings;
    const sign = nearSide ? '-' : '+';
    const at = `points.${index - 1}`;
    const percentKey = `${at}.percentOfDiameter`;
    const wallKey = `${at}.distanceFromWall_in`;

    const rOverR = Math.sqrt((2 * ring - 1) / (2 * rings));
    const percent = w.number(
      {
        key: percentKey,
        label: `Point ${index}, percent of diameter from the inside wall`,
        equation: String.raw`P_{${index}} = 50\left(1 ${sign} \sqrt{\frac{2(${ring}) - 1}{2(${rings})}}\right)`,
        unit: '% of diameter',
        source: TABLE_SOURCE,
        inputs: ['pointsPerDiameter'],
      },
      50 * (nearSide ? 1 - rOverR : 1 + rOverR),
    );

    const equalArea = (percent / 100) * diameter;
    const nearest = clearance;
    const farthest = diameter - clearance;
    const relocated = equalArea < nearest || equalArea > farthest;
    const distance = w.number(
      {
        key: wallKey,
        label: `Point ${index}, distance from the inside wall`,
        equation: relocated
          ? String.raw`x_{${index}} = \frac{P_{${index}}}{100}\,D \rightarrow ${fmt(equalArea < nearest ? nearest : farthest)}\ \text{in. (at least ${clearance.toFixed(2)} in. from either wall)}`
          : String.raw`x_{${index}} = \frac{P_{${index}}}{100}\,D`,
        unit: 'in.',
        source: relocated ? `${TABLE_SOURCE}; ${RELOCATION_SOURCE}` : TABLE_SOURCE,
        dependsOn: [percentKey],
        inputs: ['stackDiameter_in'],
      },
      Math.min(Math.max(equalArea, nearest), farthest),
    );

    const fromPortEnd = w.number(
      {
        key: `${at}.distanceFromPortEnd_in`,
        label: `Point ${index}, probe mark from the outer end of the port`,
        equation: String.raw`x_{${index}} + L_{port}`,
        unit: 'in.',
        source: 'Common practice (probe marking: port length plus wall distance)',
        dependsOn: [wallKey],
        inputs: ['portLength_in'],
      },
      distance + input.portLength_in,
    );

    if (relocated) {
      const nearWall = equalArea < nearest;
      const gap = nearWall ? equalArea : diameter - equalArea;
      w.warn(
        `Point ${index} (${fmt(percent, 3)} % of diameter) falls ${fmt(gap, 3)} in. from the ${nearWall ? 'port-side' : 'far'} wall, closer than the ${clearance.toFixed(2)} in. Method 1 allows in a stack ${diameter > SMALL_STACK_MAX_DIAMETER_IN ? 'over 24 in.' : 'of 24 in. or less'}; it is relocated to ${fmt(distance, 4)} in. from the port-side wall (${RELOCATION_SOURCE}). Use the nozzle inside diameter instead if it is larger.`,
      );
    }

    points.push({
      index,
      percentOfDiameter: percent,
      distanceFromWall_in: distance,
      distanceFromPortEnd_in: fromPortEnd,
      relocated,
    });
  }

  return { points };
}
