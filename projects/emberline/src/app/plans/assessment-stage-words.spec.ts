import { assessmentStageLabels, assessmentStages, taskStageLabels } from '@emberline/shared';
import { clinicalStageWords, stageInWords } from './assessment-stage-words';

describe('stageInWords', () => {
  it('turns every engine stage, as the server names it, into clinical words', () => {
    for (const stage of assessmentStages) {
      const words = stageInWords(assessmentStageLabels[stage]);
      expect(words).toBe(clinicalStageWords[stage]);
      expect(words).not.toBe(assessmentStageLabels[stage]);
    }
  });

  it('turns the task’s own steps into clinical words', () => {
    expect(stageInWords(taskStageLabels['reading-structures'])).toBe(
      'Reading the outlined structures',
    );
    expect(stageInWords(taskStageLabels['calibrating-heating'])).toContain('heating model');
  });

  it('names the distance step by what it measures', () => {
    expect(stageInWords(assessmentStageLabels['distance-fields'])).toBe(
      'Measuring distances to vessels and organs',
    );
  });

  it('shows a step it does not know as the server named it', () => {
    expect(stageInWords('A step of a newer engine')).toBe('A step of a newer engine');
  });
});
