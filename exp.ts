import { createReadStream, readdirSync } from 'node:fs';
import { checkFile } from './src/lib/server/ingest/check-file';
import { offlineCheckContext } from './src/lib/server/ingest/context';
const ctx = offlineCheckContext({ stateFips: '19', districtCounties: new Set(['19109', '19063', '19147']), today: '2026-06-01' });
const D = 'tests/fixtures/bad/';
for (const f of readdirSync(D).sort()) {
  const ext = f.split('.').pop()!;
  if (!['csv','xlsx','json','ndjson'].includes(ext)) continue;
  const file: string[] = []; const rows: Record<string, string[]> = {}; let end: any;
  for await (const e of checkFile(createReadStream(D + f), ext as any, ctx)) {
    if (e.kind === 'file-finding') file.push(e.finding.code + (e.finding.severity === 'warning' ? '(w)' : ''));
    if (e.kind === 'row') rows[e.row] = e.findings.map((x) => x.code + (x.severity === 'warning' ? '(w)' : '') + (x.cell ? '@' + x.cell : '')).concat(e.record ? ['OK'] : ['REJ']);
    if (e.kind === 'end') end = e.stats;
  }
  console.log(f, JSON.stringify({ enc: end.encoding, sheet: end.sheet, file, rows, acc: end.accepted, rej: end.rejected }));
}
