/** A member of staff of the invented North Hospital, as its identity provider knows them. */
export interface DemoStaffMember {
  /** Short key the sign-in page posts back. */
  key: string;
  /**
   * Persistent NameID (SAML 2.0 Core §8.3.7): opaque and stable, so Emberline links the account
   * by it rather than by an e-mail address that may change.
   */
  nameId: string;
  email: string;
  displayName: string;
  /** Shown on the sign-in page only; Emberline grants its own roles. */
  jobTitle: string;
}

/** Invented people of an invented hospital; `.test` is reserved and never resolves (RFC 2606). */
export const demoStaff: readonly DemoStaffMember[] = [
  {
    key: 'alex.morgan',
    nameId: 'nh-7c41e9a0-hep',
    email: 'alex.morgan@north-hospital.test',
    displayName: 'Alex Morgan',
    jobTitle: 'Consultant hepatologist',
  },
  {
    key: 'sam.okoro',
    nameId: 'nh-2b86d153-ir',
    email: 'sam.okoro@north-hospital.test',
    displayName: 'Sam Okoro',
    jobTitle: 'Interventional radiologist',
  },
  {
    key: 'rina.vasquez',
    nameId: 'nh-95f0c7d2-nc',
    email: 'rina.vasquez@north-hospital.test',
    displayName: 'Rina Vasquez',
    jobTitle: 'Nurse coordinator, liver unit',
  },
];
