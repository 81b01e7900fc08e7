import { describe, expect, it } from 'vitest';
import { runCli } from './run-cli.ts';
import { degrees, integerFlag, parseCommand } from '../../sdk/cli/options.ts';

const run = runCli;

describe('nearveil command line', () => {
  it('reads a negative number after a flag as its value (western longitudes)', () => {
    const { values } = parseCommand('query', ['--lat', '45.5', '--lon', '-111.42', '--dataset', 'x'], {
      lat: { type: 'string' },
      lon: { type: 'string' },
      dataset: { type: 'string' },
    });
    expect(values).toEqual({ lat: '45.5', lon: '-111.42', dataset: 'x' });
  });

  it('checks coordinates: WGS 84 latitude within [-90, 90], longitude within [-180, 180]', () => {
    expect(degrees('-90', '--lat', -90, 90)).toBe(-90);
    expect(degrees('179.999', '--lon', -180, 180)).toBe(179.999);
    expect(() => degrees('90.0001', '--lat', -90, 90)).toThrow('--lat: expected decimal degrees between -90 and 90, got "90.0001"');
    expect(() => degrees('12e1', '--lat', -90, 90)).toThrow(/got "12e1"/);
    expect(() => degrees('north', '--lat', -90, 90)).toThrow(/got "north"/);
    expect(() => degrees(undefined, '--lon', -180, 180)).toThrow('--lon is required');
  });

  it('answers usage mistakes with exit code 2 and one line naming the flag', async () => {
    expect(await run(['frobnicate'])).toMatchObject({ code: 2, err: expect.stringMatching(/unknown command "frobnicate"/) });
    expect(await run(['query', '--lat', '45', '--lon', '-111'])).toMatchObject({ code: 2, err: 'nearveil: --dataset is required: the slug of the dataset to ask' });
    expect(await run(['query', '--dataset', 'x', '--lat', '45', '--lon', '-111', '--colour'])).toMatchObject({ code: 2, err: expect.stringMatching(/Unknown option '--colour'/) });
    expect(await run(['import', '--dataset', 'x'])).toMatchObject({ code: 2, err: 'nearveil: import: expected one FILE, got none' });
    expect(await run(['import', 'a.csv', '--dataset', 'Bad Slug'])).toMatchObject({ code: 2, err: expect.stringMatching(/--dataset: use 1-63 lowercase/) });
  });

  it('checks browser key flags before asking the server: exact origins, --browser, a rate in range', async () => {
    expect(await run(['key', 'create', '--browser', '--label', 'page', '--origin', 'https://finder.example/clinics'])).toMatchObject({
      code: 2,
      err: 'nearveil: --origin: expected an exact origin such as https://finder.example (scheme and host, no path or trailing slash), got "https://finder.example/clinics"; did you mean https://finder.example?',
    });
    expect(await run(['key', 'create', '--browser', '--label', 'page'])).toMatchObject({ code: 2, err: expect.stringMatching(/--browser: name at least one --origin/) });
    expect(await run(['key', 'create', '--label', 'page', '--origin', 'https://finder.example'])).toMatchObject({ code: 2, err: expect.stringMatching(/--origin and --rate are for browser keys; add --browser/) });
    expect(await run(['key', 'create', '--browser', '--label', 'p', '--origin', 'https://finder.example', '--rate', '0'])).toMatchObject({ code: 2, err: expect.stringMatching(/--rate: expected a whole number from 1 to 10000, got "0"/) });
    expect(await run(['key', 'make'])).toMatchObject({ code: 2, err: expect.stringMatching(/key: expected one of .*nearveil key list/) });
    expect(await run(['key', 'origins', '--id', 'k1'])).toMatchObject({ code: 2, err: expect.stringMatching(/name the new origins with --origin/) });
  });

  it('checks finder page flags before asking the server', async () => {
    expect(await run(['finder', 'on', '--dataset', 'clinics', '--frame-origin', 'orrin-health.example'])).toMatchObject({ code: 2, err: expect.stringMatching(/^nearveil: --frame-origin: expected an exact origin .* got "orrin-health.example"$/) });
    expect(await run(['finder', 'on', '--dataset', 'clinics', '--frame-origin', 'https://orrin-health.example/embed'])).toMatchObject({ code: 2, err: expect.stringMatching(/did you mean https:\/\/orrin-health.example\?$/) });
    expect(await run(['finder', 'on', '--dataset', 'clinics', '--k', '9'])).toMatchObject({ code: 2, err: expect.stringMatching(/--k: expected a whole number from 1 to 8, got "9"/) });
    expect(await run(['finder', 'off', '--dataset', 'clinics', '--k', '2'])).toMatchObject({ code: 2, err: 'nearveil: finder off: --frame-origin, --k and --rate go with `nearveil finder on`' });
    expect(await run(['finder', 'open', '--dataset', 'clinics'])).toMatchObject({ code: 2, err: expect.stringMatching(/finder: expected `nearveil finder show`, `on` or `off`, got "open"/) });
    expect(await run(['finder', 'on'])).toMatchObject({ code: 2, err: expect.stringMatching(/--dataset is required/) });
  });

  it('checks --k and --max-k: a whole number from 1 to 8, named in the message', async () => {
    expect(integerFlag(undefined, '--k', 1, 8, 1)).toBe(1);
    expect(integerFlag('8', '--max-k', 1, 8, 1)).toBe(8);
    for (const bad of ['0', '9', '2.5', 'three', '-1', '']) expect(() => integerFlag(bad, '--k', 1, 8, 1)).toThrow(`--k: expected a whole number from 1 to 8, got "${bad}"`);
    expect(await run(['query', '--dataset', 'x', '--lat', '45', '--lon', '-111', '--k', '9'])).toMatchObject({ code: 2, err: expect.stringMatching(/--k: expected a whole number from 1 to 8, got "9"/) });
    expect(await run(['import', 'a.csv', '--dataset', 'x', '--max-k', '0'])).toMatchObject({ code: 2, err: expect.stringMatching(/--max-k: expected a whole number from 1 to 8, got "0"/) });
    expect(await run(['plan', 'a.csv', '--max-k', 'x'])).toMatchObject({ code: 2, err: expect.stringMatching(/--max-k: expected a whole number/) });
  });

  it('prints help listing both commands', async () => {
    const help = await run(['help']);
    expect(help.code).toBe(0);
    expect(help.out).toMatch(/nearveil query --dataset SLUG --lat DEG --lon DEG/);
    expect(help.out).toMatch(/nearveil import FILE --dataset SLUG/);
  });
});

describe('nearveil usage arguments', () => {
  it('refuses a malformed month or slug before calling the server', async () => {
    expect(await run(['usage', '--month', '2026-13', '--token', 'nva_x'])).toMatchObject({ code: 2, err: 'nearveil: --month: expected YYYY-MM, got "2026-13"' });
    expect(await run(['usage', '--dataset', 'Not A Slug', '--token', 'nva_x'])).toMatchObject({ code: 2, err: expect.stringMatching(/^nearveil: --dataset: /) });
    expect(await run(['usage', '--tenant', 'X!', '--token', 'nva_x'])).toMatchObject({ code: 2, err: expect.stringMatching(/^nearveil: --tenant: /) });
    expect(await run(['usage', 'extra', '--token', 'nva_x'])).toMatchObject({ code: 2, err: expect.stringMatching(/unexpected argument "extra"/) });
    const saved = process.env.NEARVEIL_PASSWORD;
    delete process.env.NEARVEIL_PASSWORD;
    try {
      expect(await run(['usage', '--email', 'operator@nearveil.invalid', '--tenant', 'demo'])).toMatchObject({ code: 2, err: expect.stringMatching(/^nearveil: --email: set NEARVEIL_PASSWORD/) });
    } finally {
      if (saved !== undefined) process.env.NEARVEIL_PASSWORD = saved;
    }
  });
});

describe('nearveil versions, publish and rollback arguments', () => {
  it('refuses a missing dataset, a bad version number and flags of another command', async () => {
    expect(await run(['versions', '--token', 'nva_x'])).toMatchObject({ code: 2, err: expect.stringMatching(/^nearveil: --dataset is required/) });
    expect(await run(['publish', '--dataset', 'pharmacies', '--token', 'nva_x'])).toMatchObject({ code: 2, err: expect.stringMatching(/^nearveil: --version is required/) });
    expect(await run(['publish', '--dataset', 'pharmacies', '--version', '0', '--token', 'nva_x'])).toMatchObject({ code: 2, err: 'nearveil: --version: expected a whole number >= 1, got "0"' });
    expect(await run(['rollback', '--dataset', 'pharmacies', '--to', 'last', '--token', 'nva_x'])).toMatchObject({ code: 2, err: 'nearveil: --to: expected a whole number >= 1, got "last"' });
    expect(await run(['rollback', '--dataset', 'pharmacies', '--version', '2', '--token', 'nva_x'])).toMatchObject({ code: 2, err: expect.stringMatching(/--version does not apply here/) });
  });

  it('lists the commands in help', async () => {
    const help = await run(['help']);
    for (const line of ['nearveil versions --dataset SLUG', 'nearveil publish --dataset SLUG --version V', 'nearveil rollback --dataset SLUG', 'nearveil usage [--dataset SLUG] [--month YYYY-MM] [--tenant SLUG]']) {
      expect(help.out).toContain(line);
    }
  });
});
