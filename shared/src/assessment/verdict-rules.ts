/**
 * The rules of the verdict (verdict.ts) and their identifiers in `VerdictReason.rule`; the
 * plan comparison words them by these identifiers.
 */
export const verdictRules = {
  /** A critical kind lies on the path: refusal. */
  criticalTraversal: 'critical-traversal',
  /** The path passes closer to a kind than its minimum clearance: caution. */
  clearance: 'clearance',
  /** … closer than half the minimum to a critical kind: refusal. */
  criticalClearance: 'critical-clearance',
  /** The path is longer than the applicator's working length: refusal. */
  workingLength: 'working-length',
  /** The path is steeper from the axial plane than the maximum: caution. */
  angulation: 'angulation',
  /** The path crosses the liver surface more often than the maximum: caution. */
  capsuleCrossings: 'capsule-crossings',
  /** Less parenchyma than the minimum before the tumour: caution. */
  parenchymaBeforeTumour: 'parenchyma-before-tumour',
  /** Part of a tumour lies outside the zone: refusal. */
  tumourCoverage: 'tumour-coverage',
  /** The minimal ablative margin is below the profile's minimum: refusal. */
  marginMinimum: 'margin-minimum',
  /** … at or above the minimum but below the target: caution. */
  marginTarget: 'margin-target',
  /** A heat-sink vessel lies beside the zone, or may (its calibre or gap unconfirmed): caution. */
  heatSink: 'heat-sink',
  /** No tumour structure was found to assess coverage against: caution. */
  coverageNotAssessed: 'coverage-not-assessed',
  /** Part of the path lies beyond the series, unchecked: caution. */
  pathBeyondSeries: 'path-beyond-series',
  /** A zone reaches the edge of the grid it was computed on, its figures cut short: caution. */
  zoneCut: 'zone-cut',
  /** The robot-assisted rehearsal's tip ends farther from the target than the tolerance: caution. */
  rehearsalTipError: 'rehearsal-tip-error',
  /** Even the robot-assisted rehearsal cannot bring the tip into the tumour: refusal. */
  rehearsalUnreachable: 'rehearsal-unreachable',
} as const;
