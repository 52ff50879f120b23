import fs from 'node:fs';
import path from 'node:path';
import { spawnSync } from 'node:child_process';

const ROOT = path.resolve(import.meta.dirname, '../..');

function newestMtime(target: string): number {
  if (!fs.existsSync(target)) return 0;
  const stat = fs.statSync(target);
  if (!stat.isDirectory()) return stat.mtimeMs;
  return fs.readdirSync(target).reduce((max, entry) => Math.max(max, newestMtime(path.join(target, entry))), stat.mtimeMs);
}

/** Builds the client when dist/client is missing or older than its sources. */
export function buildClientIfNeeded(force = false) {
  const builtAt = newestMtime(path.join(ROOT, 'dist/client/index.html'));
  const sourcesAt = Math.max(...['src', 'shared', 'index.html', 'vite.config.ts'].map((p) => newestMtime(path.join(ROOT, p))));
  if (!force && builtAt > sourcesAt) return false;
  console.log('[build] building the client…');
  const result = spawnSync(process.execPath, [path.join(ROOT, 'node_modules/vite/bin/vite.js'), 'build', '--logLevel', 'warn'], { cwd: ROOT, stdio: 'inherit' });
  if (result.status !== 0) throw new Error('The client build failed');
  return true;
}
