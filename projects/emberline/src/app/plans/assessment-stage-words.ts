import {
  assessmentStageLabels,
  assessmentStages,
  taskStageLabels,
  type AssessmentStage,
  type TaskStage,
} from '@emberline/shared';

/**
 * What each step of an assessment does, in the words a clinician reads: the engine and its task
 * name their steps for engineers ("Distance fields", "Crop"); the progress shown to the board
 * says what is being checked. The one place the client turns a step into words.
 */
export const clinicalStageWords: Record<AssessmentStage | TaskStage, string> = {
  'reading-structures': 'Reading the outlined structures',
  'calibrating-heating': 'Fitting the heating model to the applicator’s zone table',
  inventory: 'Checking which structures are outlined',
  'zone-table': 'Looking up the zone size for the chosen power and time',
  crop: 'Selecting the region around the needle and the tumour',
  'distance-fields': 'Measuring distances to vessels and organs',
  trajectory: 'Checking the needle path against nearby structures',
  'table-zone': 'Placing the ablation zone from the applicator’s table',
  vessels: 'Measuring the width of nearby vessels',
  'bioheat-zone': 'Simulating how the tissue heats (physics model)',
  coverage: 'Measuring tumour coverage and ablative margins',
  'heat-sinks': 'Looking for vessels that may cool the zone',
  rehearsal: 'Rehearsing the insertion in the breathing liver',
  verdict: 'Applying the safety profile’s rules',
};

const stageByLabel = new Map<string, AssessmentStage | TaskStage>([
  ...assessmentStages.map((stage) => [assessmentStageLabels[stage], stage] as const),
  ...(Object.keys(taskStageLabels) as TaskStage[]).map(
    (stage) => [taskStageLabels[stage], stage] as const,
  ),
]);

/**
 * The step named in a progress event, in clinical words. A step the client does not know (a
 * newer server) shows as the server named it rather than not at all.
 */
export function stageInWords(stage: string): string {
  const known = stageByLabel.get(stage);
  return known ? clinicalStageWords[known] : stage;
}
