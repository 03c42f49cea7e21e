// The physics zone model: Pennes bioheat, Arrhenius and CEM43 damage,
// applicator heating, zone simulation and calibration. The solver's inner loop
// (pennes-kernel.ts) and its rate table stay internal.
export * from './tissue-properties';
export * from './thermal-damage';
export {
  stableTimeStepS,
  type BioheatGrid,
  type BioheatMedium,
  type WallCondition,
  type WallConditions,
} from './bioheat-grid';
export * from './pennes-solver';
export * from './pennes-steady-state';
export * from './applicator-heating';
export * from './zone-measurement';
export * from './zone-crop';
export * from './simulate-zone';
export * from './homogeneous-zone';
export * from './heating-parameters';
export * from './calibration';
export * from './damage-resampling';
