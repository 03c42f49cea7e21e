import { zoneTableSourceLabels, type AssessmentInputsView } from '@emberline/shared';
import type {
  ComparedPlan,
  ComparisonCell,
  ComparisonGroup,
  ComparisonRow,
} from './comparison-rows';

const notRecorded: ComparisonCell = {
  type: 'absent',
  text: 'Not recorded: assessed before the inputs were kept with each assessment',
};

/**
 * The group of the comparison that names what each assessment ran on: the safety profile and
 * the applicator profiles with their versions and where each zone table comes from, the engine
 * version, and what has changed since ("assessed on earlier inputs"). Figures of two plans
 * assessed on different profile versions are not measured against the same rules.
 */
export function inputsGroup(columns: readonly ComparedPlan[]): ComparisonGroup {
  const cellsOf = (cell: (inputs: AssessmentInputsView) => ComparisonCell) =>
    columns.map(({ assessment }) => (assessment.inputs ? cell(assessment.inputs) : notRecorded));
  const rows: ComparisonRow[] = [
    {
      key: 'safety-profile',
      label: 'Safety profile (name, version)',
      direction: null,
      cells: cellsOf((inputs) => ({
        type: 'list',
        emptyText: '',
        items: [
          {
            text: `${inputs.safetyProfile.name}, version ${inputs.safetyProfile.version}`,
            flag: '',
          },
        ],
      })),
    },
    {
      key: 'applicator-profiles',
      label: 'Applicator profiles (name, version; source of the zone table)',
      direction: null,
      cells: cellsOf((inputs) => ({
        type: 'list',
        emptyText: 'None',
        items: inputs.applicatorProfiles.map((profile) => ({
          text:
            `${profile.name}, version ${profile.version}; zone table: ` +
            zoneTableSourceLabels[profile.zoneTableSource] +
            (profile.zoneTableReference ? ` (${profile.zoneTableReference})` : ''),
          flag: '',
        })),
      })),
    },
    {
      key: 'engine-version',
      label: 'Assessment engine (version)',
      direction: null,
      cells: cellsOf((inputs) => ({
        type: 'list',
        emptyText: '',
        items: [{ text: inputs.engineVersion, flag: '' }],
      })),
    },
    {
      key: 'input-changes',
      label: 'Changed since the assessment ran (assessed on earlier inputs)',
      direction: null,
      cells: columns.map(({ assessment }) => ({
        type: 'list',
        emptyText: 'Nothing: assessed on today’s inputs',
        items: (assessment.inputChanges ?? []).map((change) => ({
          text: change.message,
          flag: 'Changed',
        })),
      })),
    },
  ];
  return { key: 'inputs', title: 'Inputs of each assessment', rows };
}
