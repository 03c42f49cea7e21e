// The plan assessment engine (server/src/modules/assessments/README.md runs it): pure
// computation shared by browser and server.
export * from './engine-refusal';
export * from './zone-table';
export * from './ellipsoid-zone';
export * from './assessment-input';
export * from './assessment-stages';
export * from './distance-field-cache';
export * from './label-inventory';
export * from './path-profile';
export * from './trajectory-safety';
export * from './coverage';
export * from './tumour-label';
export * from './zone-field';
export * from './vessel-calibre';
export * from './heat-sinks';
export * from './verdict';
export * from './bioheat-zone';
export * from './physics-acceptance';
export * from './zone-display';
export * from './assess-plan';
export * from './rehearsal-stage';
