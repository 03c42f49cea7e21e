import type { Routes } from '@angular/router';
import { enrolmentGuard, roleGuard, signedInGuard, signedOutGuard } from './core/access-guards';

export const routes: Routes = [
  {
    path: 'sign-in',
    title: 'Sign in',
    canActivate: [signedOutGuard],
    loadComponent: () => import('./account/sign-in').then((m) => m.SignIn),
  },
  {
    path: '',
    canActivate: [signedInGuard],
    canActivateChild: [enrolmentGuard],
    loadComponent: () => import('./core/shell').then((m) => m.Shell),
    children: [
      { path: '', pathMatch: 'full', redirectTo: 'cases' },
      {
        path: 'cases',
        title: 'Cases',
        loadComponent: () => import('./cases/case-register').then((m) => m.CaseRegister),
      },
      {
        path: 'cases/:id',
        loadChildren: () => import('./cases/case-file.routes').then((m) => m.caseFileRoutes),
      },
      {
        path: 'boards',
        title: 'Boards',
        loadComponent: () => import('./boards/board-list').then((m) => m.BoardList),
      },
      {
        path: 'boards/:id',
        title: 'Board',
        loadComponent: () => import('./boards/board-detail').then((m) => m.BoardDetail),
      },
      {
        path: 'meetings',
        loadChildren: () => import('./meetings/meetings.routes').then((m) => m.meetingRoutes),
      },
      {
        path: 'bookings',
        title: 'Bookings',
        canMatch: [roleGuard('nurse-coordinator')],
        loadComponent: () => import('./bookings/booking-queue').then((m) => m.BookingQueue),
      },
      {
        path: 'admin',
        canMatch: [roleGuard('administrator')],
        loadChildren: () => import('./admin/admin.routes').then((m) => m.adminRoutes),
      },
      {
        path: 'dev/mail',
        title: 'Test mailbox',
        canMatch: [roleGuard('administrator', 'nurse-coordinator')],
        loadComponent: () => import('./dev-mail/dev-mail').then((m) => m.DevMail),
      },
      {
        path: 'account',
        title: 'Your account',
        loadComponent: () => import('./account/account').then((m) => m.Account),
      },
      {
        path: 'no-role',
        title: 'Waiting for a role',
        loadComponent: () => import('./core/no-role').then((m) => m.NoRole),
      },
      {
        path: '**',
        title: 'No such page',
        loadComponent: () => import('./core/not-found').then((m) => m.NotFound),
      },
    ],
  },
];
