import { writeFileSync } from 'node:fs';
import { harrowValeCsv } from './harrow-vale.ts';

// Writes demo/my-sites.csv, the small invented table the README imports as an example.
writeFileSync(new URL('../../demo/my-sites.csv', import.meta.url), harrowValeCsv(40, 7));
