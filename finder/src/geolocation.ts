import type { Point } from './coordinates.ts';

/** Why the browser gave no position, in words that point the person to typing coordinates. */
export class PositionProblem extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'PositionProblem';
  }
}

// GeolocationPositionError codes (W3C Geolocation API): 1 denied, 2 unavailable, 3 timeout.
const MESSAGES: Record<number, string> = {
  1: 'This page was not allowed to use your position. You can type coordinates below instead, or allow location for this site in your browser settings and try again.',
  2: 'Your device could not work out its position just now. You can type coordinates below instead, or turn on location services and try again.',
  3: 'Finding your position took too long. Try again, or type coordinates below instead.',
};

/**
 * Asks the browser for the device's position, once, when the person pressed the button. The
 * position goes no further than this page: the caller turns it into an encrypted query.
 */
export function currentPosition(timeoutMs = 20_000): Promise<Point> {
  return new Promise((resolve, reject) => {
    if (!('geolocation' in navigator)) {
      reject(new PositionProblem('This browser cannot share a position. Type coordinates below instead.'));
      return;
    }
    navigator.geolocation.getCurrentPosition(
      (position) => resolve({ lat: position.coords.latitude, lon: position.coords.longitude }),
      (error) => reject(new PositionProblem(MESSAGES[error.code] ?? MESSAGES[2]!)),
      { enableHighAccuracy: false, timeout: timeoutMs, maximumAge: 60_000 },
    );
  });
}
