// Stand-in for zod's locales index in the production bundle (see englishOnlyZodLocales in
// scripts/build.mjs): English only.
export { default as en } from 'zod/v4/locales/en.js';
