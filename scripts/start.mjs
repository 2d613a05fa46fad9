#!/usr/bin/env node
// `npm start`: builds the app (about a second) and serves it on http://localhost:8000/ (or the
// next free port; PORT sets the first one tried). The first start in a browser seeds the
// fictional demo notebook. For live reload while developing, use `npm run dev`.
import { build } from './build.mjs';
import { serveDist } from './serve.mjs';

await build({ quiet: true });
const first = Number.parseInt(process.env.PORT ?? '', 10) || 8000;
let started;
for (let port = first; port < first + 100 && !started; port += 1) {
  started = await serveDist({ port }).catch((e) => (e.code === 'EADDRINUSE' ? undefined : Promise.reject(e)));
}
if (!started) throw new Error(`No free port from ${first}.`);
console.log(`Tidemark is running at http://localhost:${started.port}/ — press Ctrl+C to stop`);
const stop = () => started.server.close(() => process.exit(0));
process.on('SIGTERM', stop);
process.on('SIGINT', stop);
