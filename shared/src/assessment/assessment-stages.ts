/**
 * The stages of an assessment, their names in words for progress messages, their share of the
 * work for the progress fraction, and the clock that times them.
 */

export const assessmentStages = [
  'inventory',
  'zone-table',
  'crop',
  'distance-fields',
  'trajectory',
  'table-zone',
  'vessels',
  'bioheat-zone',
  'coverage',
  'heat-sinks',
  'rehearsal',
  'verdict',
] as const;
export type AssessmentStage = (typeof assessmentStages)[number];

export const assessmentStageLabels: Record<AssessmentStage, string> = {
  inventory: 'Label inventory',
  'zone-table': 'Zone table',
  crop: 'Crop',
  'distance-fields': 'Distance fields',
  trajectory: 'Trajectory safety',
  'table-zone': 'Table zone',
  vessels: 'Vessel calibre',
  'bioheat-zone': 'Bioheat zone',
  coverage: 'Coverage',
  'heat-sinks': 'Heat sinks',
  rehearsal: 'Insertion rehearsal',
  verdict: 'Verdict',
};

/**
 * The steps the server's assessment task reports around the engine's own stages (reading the
 * label map, calibrating the heating model per applicator profile), with their words.
 */
export const taskStageLabels = {
  'reading-structures': 'Reading the structures',
  'calibrating-heating': 'Calibrating the heating model',
} as const;
export type TaskStage = keyof typeof taskStageLabels;

/** Rough share of a table-only run's time (measured on the benchmark plan), summing to 1. */
const TABLE_RUN_SHARES: Record<AssessmentStage, number> = {
  inventory: 0.02,
  'zone-table': 0.01,
  crop: 0.03,
  'distance-fields': 0.03,
  trajectory: 0.02,
  'table-zone': 0.01,
  vessels: 0.44,
  'bioheat-zone': 0,
  coverage: 0.13,
  'heat-sinks': 0.3,
  rehearsal: 0,
  verdict: 0.01,
};

/** Share of the bioheat zone when it runs: the physics dominates everything else. */
const BIOHEAT_SHARE = 0.75;
/** Share of the insertion rehearsal when it runs (measured on the demo plans: most of a run). */
const REHEARSAL_SHARE = 0.8;

/** Where an assessment is, for a progress bar. */
export interface AssessmentProgress {
  stage: AssessmentStage;
  /** The stage in words. */
  label: string;
  /** Share of the whole assessment done, 0–1. */
  fraction: number;
}

/** Share of the whole run each stage takes. */
export function stageShares(
  withBioheat: boolean,
  withRehearsal = false,
): Record<AssessmentStage, number> {
  const shares = { ...TABLE_RUN_SHARES };
  const scaleAll = (factor: number) => {
    for (const stage of Object.keys(shares) as AssessmentStage[]) shares[stage] *= factor;
  };
  if (withBioheat) {
    scaleAll(1 - BIOHEAT_SHARE);
    shares['bioheat-zone'] = BIOHEAT_SHARE;
  }
  if (withRehearsal) {
    scaleAll(1 - REHEARSAL_SHARE);
    shares.rehearsal = REHEARSAL_SHARE;
  }
  return shares;
}

/** Milliseconds from an arbitrary origin: `performance.now()` where there is one. */
export function monotonicMs(): number {
  const clock = (globalThis as { performance?: { now(): number } }).performance;
  return clock ? clock.now() : Date.now();
}
