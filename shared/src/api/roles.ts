/**
 * Roles (DEVELOPERS.md, "The product's shape"). Sign-in decides what each may do; board
 * membership decides what each may see.
 */
export const roles = [
  'presenting-physician',
  'board-member',
  'proceduralist',
  'nurse-coordinator',
  'administrator',
] as const;
export type Role = (typeof roles)[number];

export const roleLabels: Record<Role, string> = {
  'presenting-physician': 'Presenting physician',
  'board-member': 'Board member',
  proceduralist: 'Proceduralist',
  'nurse-coordinator': 'Nurse coordinator',
  administrator: 'Administrator',
};

/** Specialties a board membership may carry: the disciplines of a liver-tumour board. */
export const specialties = [
  'hepatobiliary-surgery',
  'interventional-radiology',
  'diagnostic-radiology',
  'hepatology',
  'medical-oncology',
  'radiation-oncology',
  'pathology',
  'nursing',
] as const;
export type Specialty = (typeof specialties)[number];

export const specialtyLabels: Record<Specialty, string> = {
  'hepatobiliary-surgery': 'Hepatobiliary surgery',
  'interventional-radiology': 'Interventional radiology',
  'diagnostic-radiology': 'Diagnostic radiology',
  hepatology: 'Hepatology',
  'medical-oncology': 'Medical oncology',
  'radiation-oncology': 'Radiation oncology',
  pathology: 'Pathology',
  nursing: 'Nursing',
};
