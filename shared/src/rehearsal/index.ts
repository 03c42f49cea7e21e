// The insertion rehearsal: the organ's finite-element mesh (mesh/).
export * from './mesh';
export * from './insertion';
export * from './assisted';
