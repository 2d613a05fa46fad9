/** The caution shown on every screen and printout. */
export const CAUTION =
  'Decision support only. Goals and defaults follow published guidance; check them against your local protocols and your own licensed clinical judgment.';
