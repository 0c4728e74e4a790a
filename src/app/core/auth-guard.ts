import { inject } from '@angular/core';
import { CanActivateFn, Router } from '@angular/router';

import { Session } from './session';

/** Lets signed-in users through; everyone else goes to sign in and comes back afterwards. */
export const authGuard: CanActivateFn = (_route, state) => {
  if (inject(Session).isSignedIn()) return true;
  const queryParams = state.url && state.url !== '/' ? { returnUrl: state.url } : {};
  return inject(Router).createUrlTree(['/sign-in'], { queryParams });
};
