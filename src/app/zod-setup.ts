/**
 * Imported first by the app entry, before any schema is used: zod would otherwise probe for eval
 * (`new Function`) to speed up parsing, and the page's Content-Security-Policy forbids eval, so the
 * probe only produces console errors. Goal sets are validated at import time, hence a module of
 * its own rather than a call in main.ts.
 */
import { z } from 'zod';

z.config({ jitless: true });
