import * as z from 'zod';
import { REPORT_SCHEMA_ID, type Report } from './analyze.ts';
import { SPACING_ERROR_KEYS, WINDOW_ERROR_KEYS } from './error-bars.ts';

/**
 * The report contract ("edgewise.report/1") as a schema, for `edgewise schema report` and for
 * checking a report file. It mirrors `Report` in analyze.ts; the two assignments at the end
 * make the compiler refuse a schema that has drifted from the type.
 */
const length = z.number().nullable();
const counts = z.record(z.string(), z.number());
const point = z.tuple([z.number(), z.number()]);

function errorBars<K extends string>(keys: readonly K[], unit: string) {
  const shape = Object.fromEntries(keys.map((k) => [k, z.number().nullable().optional()])) as Record<K, z.ZodOptional<z.ZodNullable<z.ZodNumber>>>;
  return z.strictObject(shape).describe(`numerical error of each field named, in its unit (${unit}): Richardson extrapolation from coarser solves`);
}

const windowReport = z.strictObject({
  x0Um: z.number(),
  x1Um: z.number(),
  centreUm: z.number(),
  junctionDepthUm: length.describe('shallowest junction below the window centre, µm'),
  junctionDepthsUm: z.array(z.number()).describe('every junction below the window centre, from the surface down, µm'),
  junctionStack: z.array(z.strictObject({ depthUm: z.number(), lateralLeftUm: z.number().nullable(), lateralRightUm: z.number().nullable() }))
    .describe('each junction below the centre with where it meets the surface beyond x0 and x1, µm'),
  lateralLeftUm: length.describe('reach of the surface junction beyond x0, under the mask, µm'),
  lateralRightUm: length.describe('reach of the surface junction beyond x1, under the mask, µm'),
  lateralReachLeftUm: length.describe('largest sideways extent of the junction beyond x0 at any depth, µm: the surface lateral for a surface source, more where the junction bulges below the surface (an implant); a buried region\'s own widest extent; null once merged on that side'),
  lateralReachRightUm: length.describe('largest sideways extent of the junction beyond x1 at any depth, µm'),
  lateralReachDepthLeftUm: length.describe('depth of the widest extent beyond x0, µm (0: at the surface)'),
  lateralReachDepthRightUm: length.describe('depth of the widest extent beyond x1, µm'),
  lateralToVerticalRatio: z.number().nullable(),
  surfaceConcentrationCm3: z.number(),
  surfaceBySpeciesCm3: counts,
  centreDoseCm2: counts,
  sheetResistanceOhmSq: length.optional().describe('sheet resistance of the surface layer below the window centre, surface to junction, Ω/sq'),
  lineResistanceOhmPerUm: length.optional().describe('resistance per µm of a long line of this drawn width, Ω/µm'),
  effectiveWidthUm: length.optional().describe('electrical width: line conductance × centre sheet resistance, µm'),
  drawnPlusLateralUm: length.optional().describe('drawn width plus the encroachment on both sides, µm: the lateral reach at any depth where it is larger than the surface lateral'),
  curvatureRadiusLeftUm: length.optional().describe('radius of the junction at the middle of its turn under the left mask edge, µm'),
  curvatureRadiusRightUm: length.optional(),
  layerStack: z.array(z.strictObject({
    type: z.enum(['n', 'p']),
    topUm: z.number(),
    bottomUm: z.number(),
    sheetResistanceOhmSq: length.describe('sheet resistance of this layer alone (a buried layer\'s pinched value), Ω/sq'),
    mobilityFit: z.string().describe('mobility fit of the layer\'s majority carriers'),
    errors: z.strictObject({ sheetResistanceOhmSq: z.number().nullable().optional() }).optional(),
  })).optional().describe('each layer below the window centre that a junction bounds, from the surface down'),
  errors: errorBars(WINDOW_ERROR_KEYS, 'µm, Ω/sq, Ω/µm, cm^-3').optional(),
});

const pairSpacing = z.strictObject({
  left: z.number().int(),
  right: z.number().int(),
  stripeUm: z.number(),
  surfaceGapUm: length.describe('gap between the two junctions at the surface, µm; 0 once merged there'),
  minimumGapUm: length.describe('closest approach of the two junctions, µm; 0 once merged'),
  minimumGapDepthUm: length,
  merged: z.boolean(),
  errors: errorBars(SPACING_ERROR_KEYS, 'µm').optional(),
});

const edgeLengths = z.strictObject({ left: length, right: length, bottom: length, top: length });
const cornerLengths = z.strictObject({ bottomLeft: length, bottomRight: length, topLeft: length, topRight: length });
const cornerKind = z.enum(['convex', 'concave']).nullable();

const rectangleReport = z.strictObject({
  x0Um: z.number(),
  y0Um: z.number(),
  x1Um: z.number(),
  y1Um: z.number(),
  junctionDepthUm: length.describe('shallowest junction below the rectangle\'s centre, µm'),
  edgeReachUm: edgeLengths.describe('reach of the surface junction beyond each edge at its middle, along the outward normal, µm; null where that middle is not on a straight stretch of the window\'s outline'),
  cornerReachUm: cornerLengths.describe('reach beyond each corner along the diagonal pointing away from the window, µm; null where it is not a corner of the outline'),
  cornerKind: z.strictObject({ bottomLeft: cornerKind, bottomRight: cornerKind, topLeft: cornerKind, topRight: cornerKind }),
  cornerToEdgeRatio: cornerLengths.describe('each corner\'s reach over the mean of the rectangle\'s edge reaches'),
  errors: z.strictObject({ junctionDepthUm: length, edgeReachUm: edgeLengths, cornerReachUm: cornerLengths }).optional()
    .describe('numerical error of each length named, µm: Richardson extrapolation from coarser solves'),
});

const perBias = z.array(z.number().nullable());
const electricalWindow = z.strictObject({
  biasAgainst: z.enum(['substrate', 'well']).describe('the region the window\'s region is reverse-biased against: the substrate, or the well that contains it'),
  breakdownV: z.number().nullable().describe('avalanche breakdown of the region (ionisation integral along field lines = 1), V: an estimate'),
  breakdownPlaneV: z.number().nullable().describe('breakdown of the same vertical profile in 1D below the window centre (the flat bottom alone), V'),
  breakdownLimitedBy: z.enum(['edge', 'plane']).nullable().describe('"edge" where the curved edge breaks down first'),
  peakFieldVPerCm: perBias.describe('largest field anywhere, per bias, V/cm'),
  peakFieldAtUm: z.array(point.nullable()).describe('where it is, [x, z] µm, per bias'),
  depletionDepthUm: perBias.describe('depth below the window centre where the carriers recover to half the doping, per bias, µm'),
  depletionLateralUm: perBias.describe('largest reach of the depletion past a mask edge at any depth, per bias, µm from the edge'),
  areaCapacitanceFPerCm2: perBias.describe('small-signal capacitance per area of the plane junction below the centre, per bias, F/cm²'),
  perimeterCapacitanceFPerCm: perBias.describe('the rest of the region\'s capacitance per length of mask edge (charge partition), per bias, F/cm'),
  errors: z.strictObject({
    breakdownV: z.number().nullable().optional(),
    breakdownPlaneV: z.number().nullable().optional(),
    peakFieldVPerCm: perBias.optional(),
    depletionDepthUm: perBias.optional(),
    depletionLateralUm: perBias.optional(),
    areaCapacitanceFPerCm2: perBias.optional(),
    perimeterCapacitanceFPerCm: perBias.optional(),
  }).optional().describe('numerical error of each field named, same unit: |f(h) − f(2h)| from a second electrostatic grid twice as coarse'),
});

const electrical = z.strictObject({
  biasV: z.array(z.number()).describe('reverse biases, V'),
  ionisation: z.string().describe('impact-ionisation coefficients of the breakdown estimate'),
  mesh: z.strictObject({ columns: z.number().int(), rows: z.number().int(), smallestSpacingUm: z.number() }),
  windows: z.array(electricalWindow.nullable()).describe('per window; null where it has no junction to bias'),
});

const ledgerEntry = z.strictObject({ enteredCm2: z.number(), inSiliconCm2: z.number(), relativeImbalance: z.number() });

export const reportSchema = z.strictObject({
  schema: z.literal(REPORT_SCHEMA_ID),
  title: z.string().nullable(),
  substrate: z.strictObject({ dopant: z.string(), type: z.string(), concentrationCm3: z.number() }),
  crossSection: z.strictObject({ widthUm: z.number(), depthUm: z.number(), lengthUm: z.number().optional().describe('3D: the plan view\'s extent in y, µm') }),
  mesh: z.strictObject({
    columns: z.number().int(), rows: z.number().int(), finestXUm: z.number(), finestZUm: z.number(),
    columnsY: z.number().int().optional().describe('3D: cells along y of the solved part'), finestYUm: z.number().optional(),
  }),
  windows: z.array(windowReport),
  rectangles: z.array(rectangleReport).optional().describe('3D (mask.rectangles): per rectangle, in the order given'),
  plan: z.strictObject({
    outlines: z.array(z.strictObject({ polylinesUm: z.array(z.array(point)) })).describe('each junction\'s outline at the surface, polylines in (x, y), µm'),
    mirrorX: z.boolean().describe('the solve used the mirror plane x = W/2'),
    mirrorY: z.boolean().describe('the solve used the mirror plane y = L/2'),
  }).optional().describe('3D: the plan view'),
  spacings: z.array(pairSpacing).optional().describe('neighbouring windows in x order'),
  mobility: z.strictObject({ carrier: z.enum(['electron', 'hole']), fit: z.string(), source: z.string() }).optional(),
  errorEstimate: z.strictObject({
    method: z.string(),
    meshes: z.array(z.strictObject({ refine: z.number(), stepGrowth: z.number(), columns: z.number().int(), rows: z.number().int() })),
    observedOrder: z.number().nullable(),
  }).optional(),
  junctions: z.array(z.strictObject({ polylinesUm: z.array(z.array(point)) })),
  doseCm2: counts,
  activation: z.record(z.string(), z.strictObject({
    totalDoseCm2: z.number(), activeDoseCm2: z.number(), peakActiveCm3: z.number(), peakTotalCm3: z.number(),
  })).describe('per species: total and electrically active dose per unit of open window (cm^-2), and the peak active and total concentration (cm^-3)'),
  models: z.array(z.strictObject({ model: z.string(), species: z.array(z.string()), source: z.string() }))
    .describe('the diffusion models the run used, each with the species it applied to and its published source'),
  ledger: z.record(z.string(), ledgerEntry),
  thermalBudgetUm2: counts,
  steps: z.array(z.strictObject({
    index: z.number().int(), kind: z.string(), temperatureC: z.union([z.number(), z.tuple([z.number(), z.number()])]).nullable(), minutes: z.number(), timeSteps: z.number().int(),
    thermalBudgetUm2: counts,
    ambient: z.enum(['dry-oxygen', 'steam']).optional().describe('an oxidising drive-in or anneal'),
    oxideUm: z.number().optional().describe('oxide in the windows at the end of an oxidising step, µm (Deal–Grove)'),
    enhancement: z.record(z.string(), z.strictObject({
      ted: z.number().describe('time-averaged D_eff/D from transient enhanced diffusion, uniform over the section'),
      oxidation: z.number().describe('time-averaged D_eff/D from oxidation where the interstitial excess is largest'),
    })).optional().describe('per species where TED or OED acted in this step'),
  })),
  field: z.strictObject({
    layers: z.array(z.string()),
    shape: z.union([z.tuple([z.number().int(), z.number().int(), z.number().int()]), z.tuple([z.number().int(), z.number().int(), z.number().int(), z.number().int()])])
      .describe('[layers, nz, nx], or [layers, nz, ny, nx] in 3D'),
  }),
  warnings: z.array(z.string()),
  electrical: electrical.optional().describe('the electrical rules at 300 K under reverse bias, when the recipe asks for them'),
});

// Both directions: a report is valid against the schema, and what the schema accepts is a report.
const _schemaCoversReport = (r: Report): z.input<typeof reportSchema> => r;
const _reportCoversSchema = (r: z.output<typeof reportSchema>): Report => r;
void _schemaCoversReport;
void _reportCoversSchema;

export function reportJsonSchema(): Record<string, unknown> {
  return { $id: REPORT_SCHEMA_ID, title: 'Edgewise report', ...z.toJSONSchema(reportSchema) };
}
