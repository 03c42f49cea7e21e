import type { Routes } from '@angular/router';

export const meetingRoutes: Routes = [
  {
    path: '',
    title: 'Meetings',
    loadComponent: () => import('./my-meetings').then((m) => m.MyMeetings),
  },
  {
    path: ':id',
    title: 'Meeting',
    loadComponent: () => import('./meeting-detail').then((m) => m.MeetingDetail),
  },
];
