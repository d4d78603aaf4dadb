import { inject } from '@angular/core';
import { CanActivateFn, Router } from '@angular/router';
import { AuthStore } from './auth-store';
import type { Capability } from './roles';

/** Signed-in users only; others go to sign-in and come back afterwards. */
export const authGuard: CanActivateFn = (_route, state) => {
  const store = inject(AuthStore);
  if (store.token()) return true;
  return inject(Router).createUrlTree(['/sign-in'], { queryParams: { returnUrl: state.url } });
};

/** Only roles holding the capability; others see the not-allowed page. */
export function capabilityGuard(capability: Capability): CanActivateFn {
  return () => {
    const store = inject(AuthStore);
    return store.can(capability) || inject(Router).createUrlTree(['/not-allowed']);
  };
}
