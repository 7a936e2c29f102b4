import { describe, expect, it } from 'vitest';
import { renderBarnMap } from '../../src/report/html/barnMap.js';
import { escapeHtml, safeId } from '../../src/report/html/escape.js';
import { renderPage } from '../../src/report/html/page.js';
import { twoRowLayout } from '../helpers/layouts.js';

describe('escapeHtml', () => {
  it('replaces the five characters that end text or an attribute in HTML', () => {
    // Entities from the HTML standard's named character references (&lt; &amp; &quot; &gt;) and the numeric &#39;.
    expect(escapeHtml(`<&">'`)).toBe('&lt;&amp;&quot;&gt;&#39;');
  });

  it('does not escape twice what it is given once, and leaves other text alone', () => {
    expect(escapeHtml('&amp;')).toBe('&amp;amp;');
    expect(escapeHtml('Pen A1 \u2013 \u00e9t\u00e9 42')).toBe('Pen A1 \u2013 \u00e9t\u00e9 42');
    expect(escapeHtml(36.5)).toBe('36.5');
  });
});

describe('safeId', () => {
  it('keeps distinct names distinct and only uses id-safe characters', () => {
    const ids = ['F1/PRRSV', 'F1_PRRSV', 'F1 PRRSV', 'F1<PRRSV'].map(safeId);
    expect(new Set(ids).size).toBe(4);
    for (const id of ids) expect(id).toMatch(/^[A-Za-z0-9_-]+$/);
  });
});

describe('hostile names on pages', () => {
  const layout = twoRowLayout({ pensPerRow: 2, rowLabels: ['<b>', 'x"&'] });

  it('shows a pen or barn name with <&"> as text in the map, never as markup', () => {
    const svg = renderBarnMap(
      { id: 'B<1>', name: 'Barn "<script>"', layout },
      { key: 'B<1>', scale: 30, detail: 'full', title: 'Barn "<script>" & co' },
    );
    expect(svg).not.toContain('<b>');
    expect(svg).not.toContain('<script>');
    expect(svg).toContain('data-pen="&lt;b&gt;1"');
    expect(svg).toContain('data-pen="x&quot;&amp;1"');
    expect(svg).toContain('<title id="B_3c_1_3e_-title">Barn &quot;&lt;script&gt;&quot; &amp; co</title>');
  });

  it('escapes a site name in the page title and heading', () => {
    const html = renderPage({ title: 'Site <&">', heading: 'Site <&">', notices: ['<i>notice</i>'], body: '' });
    expect(html).toContain('<title>Site &lt;&amp;&quot;&gt;</title>');
    expect(html).toContain('<h1>Site &lt;&amp;&quot;&gt;</h1>');
    expect(html).toContain('&lt;i&gt;notice&lt;/i&gt;');
    expect(html).not.toContain('<i>');
  });
});
