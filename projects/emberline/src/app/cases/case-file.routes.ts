import type { Routes } from '@angular/router';
import { CaseFile } from './case-file';
import { SummarySection } from './summary-section';

/** The case file and its sections (each also listed in `caseFileSections`). */
export const caseFileRoutes: Routes = [
  {
    path: '',
    component: CaseFile,
    children: [
      { path: '', pathMatch: 'full', redirectTo: 'summary' },
      { path: 'summary', title: 'Case summary', component: SummarySection },
      {
        path: 'imaging',
        title: 'Case imaging',
        loadComponent: () => import('../imaging/imaging-section').then((m) => m.ImagingSection),
      },
      {
        // Lazy on its own: vtk.js stays out of every other chunk.
        path: 'imaging/:seriesId/viewer',
        title: 'Case viewer',
        // The case file hands a workspace section the window's remaining height.
        data: { isWorkspace: true },
        loadComponent: () => import('../imaging/viewer/viewer-page').then((m) => m.ViewerPage),
      },
      {
        path: 'plans',
        title: 'Case plans',
        loadComponent: () => import('../plans/plans-section').then((m) => m.PlansSection),
      },
      {
        path: 'discussion',
        title: 'Case discussion',
        loadComponent: () =>
          import('../discussion/discussion-section').then((m) => m.DiscussionSection),
      },
      {
        path: 'decision',
        title: 'Case decision',
        loadComponent: () => import('../decisions/decision-section').then((m) => m.DecisionSection),
      },
      {
        path: 'logistics',
        title: 'Case logistics',
        loadComponent: () =>
          import('../bookings/logistics-section').then((m) => m.LogisticsSection),
      },
    ],
  },
];
