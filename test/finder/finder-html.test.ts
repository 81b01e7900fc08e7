import { describe, expect, it } from 'vitest';
import { renderFinderPage, type FinderPageConfig } from '../../api/finder/finder-html.ts';

/**
 * The finder page's HTML: the config must reach the script whole, and no title, slug or key can
 * end the JSON block or add markup. The JSON block is read back as the HTML standard's tokenizer
 * ends script data (WHATWG HTML, "script data state": the first "</script" closes it), then with
 * JSON.parse.
 */
const HOSTILE: FinderPageConfig = {
  title: 'clinics </script><script>alert(1)</script><b>bold</b> & "quoted" \'single\' <!-- \u2028',
  dataset: 'harrow</SCRIPT>-vale',
  apiKey: 'nvk_</script><img src=x>',
  k: 3,
  lang: 'en-GB',
};

function configBlock(html: string): string {
  const open = '<script type="application/json" id="finder-config">';
  const start = html.indexOf(open);
  expect(start).toBeGreaterThan(0);
  const body = html.slice(start + open.length);
  return body.slice(0, body.search(/<\/script/i));
}

describe('renderFinderPage', () => {
  it('round-trips the config through the JSON block, even with </script> and markup in every field', () => {
    const html = renderFinderPage(HOSTILE);
    expect(JSON.parse(configBlock(html))).toEqual(HOSTILE);
    expect(configBlock(html)).not.toMatch(/[<>&\u2028]/);
  });

  it('escapes the title in the <title> and heading, so it adds no element', () => {
    const html = renderFinderPage(HOSTILE);
    expect(html).not.toContain('<b>');
    expect(html).not.toContain('alert(1)</script>');
    expect(html).toContain('<title>Find the nearest clinics &#60;/script&#62;&#60;script&#62;alert(1)&#60;/script&#62;&#60;b&#62;bold&#60;/b&#62; &#38; &#34;quoted&#34; &#39;single&#39; &#60;!-- \u2028</title>');
    // Exactly the page's own elements: two scripts (the JSON block and the module), one stylesheet.
    expect(html.match(/<script/gi)).toHaveLength(2);
    expect(html.match(/<link /g)).toHaveLength(1);
  });

  it('links the built files by their fixed names, has no inline script or style, and sets lang', () => {
    const html = renderFinderPage({ title: 'care sites', dataset: 'harrow-vale-care', apiKey: 'nvk_x', k: 1 });
    expect(html).toContain('<script type="module" src="/finder/finder.js"></script>');
    expect(html).toContain('<link rel="stylesheet" href="/finder/finder.css">');
    expect(html).toMatch(/^<!doctype html>\n<html lang="en">/);
    // Under default-src 'self' without 'unsafe-inline' these would be blocked: there are none.
    expect(html).not.toMatch(/<style|\sstyle=|\son[a-z]+=|="javascript:/i);
    const scripts = [...html.matchAll(/<script([^>]*)>/g)].map((m) => m[1]);
    expect(scripts).toEqual([' type="application/json" id="finder-config"', ' type="module" src="/finder/finder.js"']);
    expect(renderFinderPage({ title: 'x', dataset: 'd', apiKey: 'k', k: 1, lang: 'fr' })).toContain('<html lang="fr">');
  });

  it('says what stays on the device before anything is asked', () => {
    const html = renderFinderPage({ title: 'care sites', dataset: 'd', apiKey: 'k', k: 1 });
    expect(html).toContain('Your position is used only inside this page');
    expect(html).toContain('encrypted query that the provider of this list cannot read');
    expect(html).toContain('learns that a search happened, on which list, when, and from which network address, but never your position');
    expect(html).toContain('can see that this device connected');
  });

  it('refuses a config it cannot render safely, naming the field', () => {
    const base = { title: 't', dataset: 'd', apiKey: 'k', k: 1 };
    expect(() => renderFinderPage({ ...base, title: ' ' })).toThrow(/expected a non-empty title/);
    expect(() => renderFinderPage({ ...base, k: 0 })).toThrow(/expected k in 1\.\.8, got 0/);
    expect(() => renderFinderPage({ ...base, k: 9 })).toThrow(RangeError);
    expect(() => renderFinderPage({ ...base, k: 1.5 })).toThrow(RangeError);
    expect(() => renderFinderPage({ ...base, lang: 'en"><script>' })).toThrow(/language tag/);
    expect(() => renderFinderPage({ ...base, apiKey: '' })).toThrow(/API key/);
  });
});
