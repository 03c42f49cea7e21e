// Robot-assisted insertion by inverse simulation: the path objective, the constraint-space
// reads, the Jacobian strategies and the damped least-squares controller (README.md here).
export * from './path-objective';
export * from './constraint-space';
export * from './active-set';
export * from './assisted-controller';
export * from './rehearse-assisted';
