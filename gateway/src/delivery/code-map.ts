import { readFileSync } from 'node:fs';
import path from 'node:path';
import { z } from 'zod';
import { repoRoot } from '../config/load';

// config/codes.json: the code map an informaticist edits (LOINC, MDC, local codes, units).

const code = z.object({ code: z.string().min(1), display: z.string().min(1) });
const unit = z.object({ code: z.string().min(1), display: z.string().min(1) });

const indexEntry = z.object({
  local: code,
  loinc: code.nullable(),
  mdc: code.nullable(),
  unit,
  method: z.string(),
  status: z.string(),
});
const componentEntry = z.object({ local: code, loinc: code.optional(), mdc: code.optional(), unit: unit.optional() });

export const codeMapSchema = z.object({
  localSystem: z.string().min(1),
  loincSystem: z.string().min(1),
  mdcSystem: z.string().min(1),
  ucumSystem: z.string().min(1),
  identifierSystems: z.object({ observation: z.string().min(1), device: z.string().min(1) }),
  category: z.object({ coding: z.array(z.object({ system: z.string(), code: z.string(), display: z.string() })).min(1), local: code }),
  indices: z.object({ ppv: indexEntry, spv: indexEntry, deltaPop: indexEntry, perfusionIndex: indexEntry }),
  components: z.object({
    cyclesUsed: componentEntry,
    cycleSpread: componentEntry,
    heartRate: componentEntry,
    respiratoryRate: componentEntry,
    hrRrRatio: componentEntry,
  }),
  verdicts: z.object({ valid: code, questionable: code, 'not-valid': code }),
  interpretationSystem: z.string(),
  notValidInterpretation: code,
  dataAbsentReasonSystem: z.string(),
  dataAbsentReason: z.object({ notValid: code, notComputable: code }),
  device: z.object({ typeText: z.string() }),
});
export type CodeMap = z.infer<typeof codeMapSchema>;

/** The indices delivered as Observations, in the order they are built. */
export const DELIVERED_INDICES = ['ppv', 'spv', 'deltaPop', 'perfusionIndex'] as const;
export type DeliveredIndex = (typeof DELIVERED_INDICES)[number];

let cached: CodeMap | undefined;

export function loadCodeMap(file = path.join(repoRoot, 'config/codes.json')): CodeMap {
  const parsed = codeMapSchema.safeParse(JSON.parse(readFileSync(file, 'utf8')));
  if (!parsed.success) throw new Error(`${file} is not a valid code map: ${z.prettifyError(parsed.error)}`);
  return parsed.data;
}

/** The default code map, read once. */
export function defaultCodeMap(): CodeMap {
  return (cached ??= loadCodeMap());
}
