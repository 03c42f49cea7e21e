import type { Routes } from '@angular/router';

export const meetingRoutes: Routes = [
  {
    path: '',
    title: 'Meetings',
    loadComponent: () => import('./my-meetings').then((m) => m.MyMeetings),
  },
  {
    path: ':id/minutes',
    title: 'Minutes',
    loadComponent: () => import('../board-session/minutes-page').then((m) => m.MinutesPage),
  },
  {
    path: ':id',
    title: 'Meeting',
    loadComponent: () => import('./meeting-detail').then((m) => m.MeetingDetail),
  },
];
