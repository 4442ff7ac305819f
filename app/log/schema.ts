// zod schema of the session setup file (setup.json), the Setup type of app/types.ts.
// docs/setup.schema.json is generated from this schema by scripts/gen-schema.ts (z.toJSONSchema).
// Pure module (runs in a browser worker).
import { z } from 'zod';
import type { Setup, Settings } from '../types';
import { PA_PER_UNIT } from '../units';

const finite = () => z.number().finite();
const positive = () => z.number().finite().positive();
const nonNeg = () => z.number().finite().nonnegative();
const id = () =>
  z
    .string()
    .min(1)
    .max(64)
    .regex(/^[^\s,"]+$/, 'no spaces, commas or quotes');

export const PRESSURE_UNITS = Object.keys(PA_PER_UNIT) as [keyof typeof PA_PER_UNIT, ...(keyof typeof PA_PER_UNIT)[]];
export const CHANNEL_UNITS = [...PRESSURE_UNITS, 'deg'] as const;

export const channelUnitSchema = z.enum(CHANNEL_UNITS);

/** Reduction settings; in setup.json every key is optional (session defaults). */
export const settingsSchema = z
  .object({
    liftTolAbs: z.number().min(0).max(1),
    liftTolRel: z.number().min(0).max(1),
    spikeK: z.number().min(1).max(50),
    unsteadyThreshold: z.number().min(0).max(1),
    wakeEdgeTol: z.number().min(0).max(1),
    tapCheckK: z.number().min(1).max(100),
    tapCheckMinU: z.number().min(0).max(1),
    stagnationK: z.number().min(0).max(100),
    contourRule: z.enum(['shape', 'linear', 'spline']),
    leakPa: z.number().min(0).max(1e5),
    zeroDriftFraction: z.number().min(0).max(1),
    machLimit: z.number().min(0).max(1),
    spanSpreadTol: z.number().min(0).max(2),
    mcDraws: z.number().int().min(0).max(20000),
    mcSeed: z.number().int(),
    correction: z.enum(['auto', 'wall-signature', 'maskell', 'barlow-rae-pope', 'allen-vincenti', 'none']),
    maskellTheta: z.number().min(0.5).max(2),
    wallFitResidualCp: z.number().min(0).max(1),
    stallTeCp: z.number().min(-5).max(1),
    correctionTolEps: z.number().min(0).max(1),
    correctionTolAlphaDeg: z.number().min(0).max(10),
    badTaps: z.array(id()).max(10000),
    keptTaps: z.array(z.string().min(3).max(80).regex(/^[^\s,"]+@\d+$/, 'tap@run, e.g. "C07@12"')).max(10000),
  })
  .strict();

export const settingsPatchSchema = settingsSchema.partial();

const geometrySchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('naca4'), code: z.string().regex(/^\d{4}$/, 'four digits, e.g. "4412"') }).strict(),
  z
    .object({ kind: z.literal('coordinates'), x: z.array(finite()).min(5), y: z.array(finite()).min(5) })
    .strict(),
]);

const targetSchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('tap'), id: id() }).strict(),
  z.object({ kind: z.literal('rake'), id: id() }).strict(),
  z.object({ kind: z.literal('floor'), id: id() }).strict(),
  z.object({ kind: z.literal('ceiling'), id: id() }).strict(),
  z.object({ kind: z.literal('reference'), ref: z.enum(['dpRef', 'pStatic', 'pTotal']) }).strict(),
]);

export const channelSchema = z
  .object({
    name: z
      .string()
      .min(1)
      .max(64)
      .regex(/^[^\s,";]+$/, 'no spaces, commas, semicolons or quotes')
      .refine((s) => s !== 't_s' && s !== 'run', 'the names "t_s" and "run" are reserved for the time and run columns'),
    target: targetSchema,
    unit: channelUnitSchema.describe('Unit of the logged values (pressures are converted to Pa on import)'),
    uncertainty: z
      .object({ fullScale: positive(), percentFullScale: nonNeg(), offset: nonNeg() })
      .strict()
      .describe("Instrument standard uncertainty (k = 1) in the channel's unit: percentFullScale % of fullScale, plus offset"),
  })
  .strict();

/** Channels sharing one transducer or scanner module (optional; app/instruments.ts). */
export const transducerGroupSchema = z
  .object({
    id: id(),
    channels: z.array(z.string().min(1).max(64)).min(1).describe('Names of the channels on this transducer or module'),
    unit: z.enum(PRESSURE_UNITS).describe('Unit of zero and fullScale'),
    fullScale: positive().describe('Full scale of the transducer(s), in unit'),
    gainPercent: nonNeg().describe('Standard uncertainty (k = 1) of the gain common to the group, % of reading'),
    zero: nonNeg().describe('Standard uncertainty (k = 1) of the zero common to the group, in unit; removed by the wind-off zero, counted only for runs without one'),
    linearityPercentFS: nonNeg().describe("Standard uncertainty (k = 1) of each channel's own error (non-linearity, hysteresis), % of full scale, independent between channels and not removed by the zero"),
  })
  .strict();

export const setupSchema = z
  .object({
    formatVersion: z.literal(1),
    session: z
      .object({
        title: z.string().min(1).max(200),
        date: z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'an ISO date YYYY-MM-DD'),
        operators: z.array(z.string().min(1).max(100)).max(50),
        notes: z.string().max(20000).optional(),
      })
      .strict(),
    facility: z
      .object({
        name: z.string().min(1).max(200),
        sectionHeight: positive().describe('Test-section height h (floor to ceiling), m'),
        sectionWidth: positive().describe('Test-section width, m'),
        qCalibration: positive().describe('Tunnel calibration constant k_q: q = k_q · Δp_ref'),
        qCalibrationUncertainty: nonNeg().optional().describe('Standard uncertainty of k_q (absolute)'),
      })
      .strict(),
    model: z
      .object({
        name: z.string().min(1).max(200),
        chord: positive().describe('Chord c, m'),
        span: positive().describe('Span b, m'),
        geometry: geometrySchema,
        alphaUncertaintyDeg: nonNeg().describe('Standard uncertainty of the angle of attack, degrees'),
        tapPositionUncertainty: nonNeg().describe('Standard uncertainty of tap positions, in x/c'),
      })
      .strict(),
    taps: z
      .array(
        z
          .object({
            id: id(),
            x: z.number().min(-0.05).max(1.05).describe('Chordwise position x/c (a cambered leading edge may sit slightly ahead of x/c = 0)'),
            y: z.number().min(-1).max(1).describe('Contour ordinate y/c'),
            surface: z.enum(['upper', 'lower']),
            row: z.string().min(1).max(16).describe("Spanwise row name; the main row is usually 'C'"),
            z: finite().describe('Spanwise station of the row, m from the tunnel centreline'),
          })
          .strict(),
      )
      .min(3),
    rake: z
      .object({
        x: positive().describe('Rake plane, m downstream of the model quarter chord'),
        probes: z.array(z.object({ id: id(), y: finite(), kind: z.enum(['total', 'static', 'angle']) }).strict()),
      })
      .strict(),
    floor: z.array(z.object({ id: id(), x: finite() }).strict()).describe('Floor static taps; x in m from the model quarter chord, positive downstream'),
    ceiling: z.array(z.object({ id: id(), x: finite() }).strict()).describe('Ceiling static taps; x as for the floor'),
    channels: z.array(channelSchema).min(1),
    transducerGroups: z
      .array(transducerGroupSchema)
      .optional()
      .describe('Channels that share one transducer or scanner module, with their correlated gain and zero errors; channels in a group use these figures instead of their own uncertainty'),
    settings: settingsPatchSchema.optional().describe('Session defaults of the reduction settings'),
  })
  .strict();

export type SetupInput = z.infer<typeof setupSchema>;

// Compile-time checks that the schema and the shared types agree both ways.
type Same<A, B> = [A] extends [B] ? ([B] extends [A] ? true : false) : false;
const setupAgrees: Same<SetupInput, Setup> = true;
const settingsAgree: Same<z.infer<typeof settingsSchema>, Settings> = true;
void setupAgrees;
void settingsAgree;

/** The JSON Schema (draft 2020-12) of setup.json, as committed in docs/setup.schema.json. */
export function setupJsonSchema(): Record<string, unknown> {
  const s = z.toJSONSchema(setupSchema, { target: 'draft-2020-12', io: 'input' }) as Record<string, unknown>;
  return {
    $schema: s.$schema,
    $id: 'https://rakeline.invalid/schema/setup-v1.json',
    title: 'Rakeline session setup (setup.json), format version 1',
    description:
      'Facility, model, taps, wake rake, wall taps, channel map with units and instrument uncertainties, and session settings. Generated from app/log/schema.ts by scripts/gen-schema.ts; do not edit by hand.',
    ...Object.fromEntries(Object.entries(s).filter(([k]) => k !== '$schema')),
  };
}
