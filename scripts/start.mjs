#!/usr/bin/env node
// `npm start`: builds the app (about a second) and serves it on http://localhost:8000/ (or the
// next free port; PORT sets the first one tried). The first start in a browser seeds the
// fictional demo notebook. For live reload while developing, use `npm run dev`.
import { build } from './build.mjs';
import { serveDist } from './serve.mjs';

await build({ quiet: true });
const first = Number.parseInt(process.env.PORT ?? '', 10) || 8000;
/** @type {Awaited<ReturnType<typeof serveDist>> | undefined} */
let started;
for (let port = first; port < first + 100 && !started; port += 1) {
  try {
    started = await serveDist({ port });
  } catch (e) {
    // A port in use: try the next one; anything else is a real failure.
    if (!(e instanceof Error && /** @type {NodeJS.ErrnoException} */ (e).code === 'EADDRINUSE')) throw e;
  }
}
if (!started) throw new Error(`No free port from ${first}.`);
console.log(`Tidemark is running at http://localhost:${started.port}/ — press Ctrl+C to stop`);
const { server } = started;
const stop = () => server.close(() => process.exit(0));
process.on('SIGTERM', stop);
process.on('SIGINT', stop);
