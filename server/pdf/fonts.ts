import fs from 'node:fs';
import path from 'node:path';
import zlib from 'node:zlib';
import { createRequire } from 'node:module';

/**
 * Open Sans for PDFs, from the @fontsource package the client also ships.
 *
 * The package has WOFF files. fontkit can read WOFF, but it inflates every table again for each new
 * document, and parsing the OpenType layout tables (GSUB, GPOS, GDEF) costs more than the rest of a
 * certificate together. So each file is unpacked once into a plain TrueType font without those
 * tables: the glyphs, metrics and character map are Open Sans byte for byte; what is lost is kerning
 * and ligatures, and without ligatures every word extracts from the PDF as typed.
 */
const require = createRequire(import.meta.url);
const FILES_DIR = path.join(path.dirname(require.resolve('@fontsource/open-sans/package.json')), 'files');
const LAYOUT_TABLES = new Set(['GSUB', 'GPOS', 'GDEF']);

/** WOFF 1.0 (W3C) to an sfnt: the same tables, inflated, behind a TrueType table directory. */
export function woffToSfnt(woff: Buffer, dropTables: ReadonlySet<string> = new Set()): Buffer {
  if (woff.toString('latin1', 0, 4) !== 'wOFF') throw new Error('Not a WOFF 1.0 font.');
  const flavor = woff.readUInt32BE(4);
  const numTables = woff.readUInt16BE(12);
  const tables: { tag: string; checksum: number; data: Buffer }[] = [];
  for (let i = 0; i < numTables; i++) {
    const entry = 44 + i * 20;
    const tag = woff.toString('latin1', entry, entry + 4);
    if (dropTables.has(tag)) continue;
    const offset = woff.readUInt32BE(entry + 4);
    const compLength = woff.readUInt32BE(entry + 8);
    const origLength = woff.readUInt32BE(entry + 12);
    const raw = woff.subarray(offset, offset + compLength);
    tables.push({ tag, checksum: woff.readUInt32BE(entry + 16), data: compLength < origLength ? zlib.inflateSync(raw) : Buffer.from(raw) });
  }
  const count = tables.length;
  let searchPow = 1;
  let entrySelector = 0;
  while (searchPow * 2 <= count) {
    searchPow *= 2;
    entrySelector++;
  }
  const directory = Buffer.alloc(12 + 16 * count);
  directory.writeUInt32BE(flavor, 0);
  directory.writeUInt16BE(count, 4);
  directory.writeUInt16BE(searchPow * 16, 6);
  directory.writeUInt16BE(entrySelector, 8);
  directory.writeUInt16BE(count * 16 - searchPow * 16, 10);
  const parts: Buffer[] = [directory];
  let offset = directory.length;
  tables.forEach((table, i) => {
    const record = 12 + i * 16;
    directory.write(table.tag, record, 'latin1');
    directory.writeUInt32BE(table.checksum, record + 4);
    directory.writeUInt32BE(offset, record + 8);
    directory.writeUInt32BE(table.data.length, record + 12);
    const padded = Buffer.alloc((table.data.length + 3) & ~3);
    table.data.copy(padded);
    parts.push(padded);
    offset += padded.length;
  });
  return Buffer.concat(parts);
}

const load = (weight: 400 | 600 | 700) =>
  woffToSfnt(fs.readFileSync(path.join(FILES_DIR, `open-sans-latin-${weight}-normal.woff`)), LAYOUT_TABLES);

let cache: { regular: Buffer; semibold: Buffer; bold: Buffer } | undefined;

/** The three weights the certificate uses, unpacked on first use and kept. */
export function openSans() {
  cache ??= { regular: load(400), semibold: load(600), bold: load(700) };
  return cache;
}
