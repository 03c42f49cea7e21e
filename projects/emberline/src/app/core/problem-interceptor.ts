import { HttpErrorResponse, type HttpInterceptorFn } from '@angular/common/http';
import { inject } from '@angular/core';
import { Router } from '@angular/router';
import { catchError, throwError } from 'rxjs';
import { AuthSession } from './auth-session';
import { EXPECTS_UNAUTHENTICATED, SHOWS_OWN_ERRORS } from './http-context-tokens';
import { problemMessage } from './problem';
import { ProblemNotice } from './problem-notice';

/**
 * An unexpected 401 means the session has ended: forget the user and go to the sign-in page,
 * keeping the address to come back to. Every other failure is told in a snack bar (the problem's
 * `detail`), unless the caller shows it itself. The error still reaches the caller, which keeps
 * what the user typed.
 */
export const problemInterceptor: HttpInterceptorFn = (request, next) => {
  const router = inject(Router);
  const session = inject(AuthSession);
  const notice = inject(ProblemNotice);
  return next(request).pipe(
    catchError((error: unknown) => {
      if (error instanceof HttpErrorResponse) {
        if (error.status === 401) {
          // An expected 401 (a refused sign-in, the session probe) is the caller's to explain.
          if (!request.context.get(EXPECTS_UNAUTHENTICATED)) {
            session.forget();
            const returnUrl = router.url.startsWith('/sign-in') ? undefined : router.url;
            void router.navigate(['/sign-in'], { queryParams: { returnUrl } });
            void notice.show('Your session has ended. Sign in again to go on.');
          }
        } else if (!request.context.get(SHOWS_OWN_ERRORS)) {
          void notice.show(problemMessage(error));
        }
      }
      return throwError(() => error);
    }),
  );
};
