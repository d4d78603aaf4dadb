import type { StereoStatus } from './compound-api';

/** The stereochemistry of a parent structure in words a chemist reads at a glance. */
export function describeStereo(status: StereoStatus, centres: number): string {
  const n = centres === 1 ? '1 stereocentre' : `${centres} stereocentres`;
  switch (status) {
    case 'achiral':
      return 'No stereocentres';
    case 'defined':
      return `${n}, all defined`;
    case 'undefined':
      return `${n}, none defined (unknown configuration or racemate)`;
    case 'partial':
      return `${n}, some not defined`;
  }
}
