import type { Routes } from '@angular/router';
import { AdminAudit } from './admin-audit';
import { AdminBoards } from './admin-boards';
import { AdminLayout } from './admin-layout';
import { AdminUsers } from './admin-users';
import { ApplicatorProfiles } from './applicator-profiles';
import { ChecklistThresholds } from './checklist-thresholds';
import { SafetyProfiles } from './safety-profiles';

export const adminRoutes: Routes = [
  {
    path: '',
    component: AdminLayout,
    children: [
      { path: '', pathMatch: 'full', redirectTo: 'users' },
      { path: 'users', title: 'Users · Administration', component: AdminUsers },
      { path: 'boards', title: 'Boards · Administration', component: AdminBoards },
      {
        path: 'applicator-profiles',
        title: 'Applicator profiles · Administration',
        component: ApplicatorProfiles,
      },
      {
        path: 'safety-profiles',
        title: 'Safety profiles · Administration',
        component: SafetyProfiles,
      },
      {
        path: 'checklist-thresholds',
        title: 'Checklist thresholds · Administration',
        component: ChecklistThresholds,
      },
      { path: 'audit', title: 'Audit log · Administration', component: AdminAudit },
    ],
  },
];
