import { HttpErrorResponse, HttpInterceptorFn } from '@angular/common/http';
import { inject } from '@angular/core';
import { Router } from '@angular/router';
import { catchError, throwError } from 'rxjs';

import { Session } from './session';

const SIGN_IN_URL = '/api/auth/sign-in';

/**
 * Adds the bearer token to API calls. A 401 from anything but the sign-in call means the token is
 * no longer accepted: forget the session and send the user to sign in, coming back here afterwards.
 */
export const authInterceptor: HttpInterceptorFn = (request, next) => {
  const session = inject(Session);
  const router = inject(Router);
  const token = session.token();
  const isApi = request.url.startsWith('/api/');
  const sent =
    isApi && token ? request.clone({ setHeaders: { Authorization: `Bearer ${token}` } }) : request;

  return next(sent).pipe(
    catchError((error: unknown) => {
      if (isApi && request.url !== SIGN_IN_URL && error instanceof HttpErrorResponse && error.status === 401) {
        session.clear();
        const returnUrl = router.url.startsWith('/sign-in') ? undefined : router.url;
        void router.navigate(['/sign-in'], { queryParams: returnUrl && returnUrl !== '/' ? { returnUrl } : {} });
      }
      return throwError(() => error);
    }),
  );
};
