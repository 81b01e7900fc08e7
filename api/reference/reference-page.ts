import { ERROR_CODES } from '../http/error-codes.ts';

type Json = Record<string, unknown>;

const escape = (text: string) => text.replace(/[&<>"']/g, (ch) => `&#${ch.charCodeAt(0)};`);

/** Inline code and paragraphs from the document's little markdown, escaped first. */
function prose(text: string): string {
  return text
    .split('\n\n')
    .map((p) => `<p>${escape(p).replace(/`([^`]+)`/g, '<code>$1</code>')}</p>`)
    .join('');
}

/** A JSON schema as compact readable text; references show the component's name. */
function schemaText(schema: unknown): string {
  return JSON.stringify(schema, (key, value) => (key === '$ref' && typeof value === 'string' ? value.replace('#/components/schemas/', '') : value), 2);
}

function operationHtml(method: string, path: string, op: Json): string {
  const id = `${method}-${path}`.replace(/[^a-z0-9]+/gi, '-');
  const params = (op.parameters as Json[] | undefined) ?? [];
  const body = (op.requestBody as { content?: Record<string, { schema?: unknown }> } | undefined)?.content;
  const responses = Object.entries((op.responses as Record<string, { description: string; content?: Record<string, { schema?: unknown }> }>) ?? {});
  return `<section id="${id}">
<h3><span class="m ${method}">${method.toUpperCase()}</span> <code>${escape(path)}</code></h3>
<p class="summary">${escape(String(op.summary ?? ''))}</p>
${prose(String(op.description ?? ''))}
${params.length ? `<h4>Parameters</h4><ul>${params.map((p) => `<li><code>${escape(String(p.name))}</code> (${escape(String(p.in))}${p.required ? ', required' : ''})${(p.schema as Json | undefined)?.description ? ': ' + escape(String((p.schema as Json).description)) : ''}</li>`).join('')}</ul>` : ''}
${body ? Object.entries(body).map(([type, c]) => `<h4>Body <code>${escape(type)}</code></h4>${c.schema ? `<pre>${escape(schemaText(c.schema))}</pre>` : ''}`).join('') : ''}
<h4>Answers</h4><dl>${responses
    .map(([status, r]) => `<dt>${escape(status)}</dt><dd>${prose(r.description)}${status.startsWith('2') && r.content ? Object.values(r.content).map((c) => (c.schema ? `<details><summary>schema</summary><pre>${escape(schemaText(c.schema))}</pre></details>` : '')).join('') : ''}</dd>`)
    .join('')}</dl>
</section>`;
}

/** The reference page: plain HTML and inline CSS rendered from the document, nothing fetched. */
export function renderReferencePage(doc: Json): string {
  const info = doc.info as { title: string; version: string; description: string };
  const paths = Object.entries(doc.paths as Record<string, Record<string, Json>>);
  const operations = paths.flatMap(([path, ops]) => Object.entries(ops).map(([method, op]) => ({ path, method, op, tag: String((op.tags as string[] | undefined)?.[0] ?? 'Other') })));
  const tags = [...new Set(operations.map((o) => o.tag))];
  const schemas = Object.entries(((doc.components as Json | undefined)?.schemas as Json | undefined) ?? {});
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>${escape(info.title)} reference</title>
<style>
body{font:15px/1.5 system-ui,sans-serif;margin:0;color:#1d232a;background:#fbfbf9}
header,main{max-width:60rem;margin:0 auto;padding:0 1.2rem}
nav ul{columns:2;padding-left:1.2rem}
h2{border-bottom:2px solid #d8dcd3;margin-top:2.5rem}
section{border:1px solid #e2e4de;border-radius:6px;padding:.2rem 1rem;margin:1rem 0;background:#fff}
.m{display:inline-block;min-width:4.2rem;font:600 13px monospace;padding:2px 6px;border-radius:4px;color:#fff;text-align:center}
.get{background:#2f6f4f}.post{background:#2d5a8c}.patch{background:#8c6d1f}.delete{background:#8c2d2d}
pre{background:#f3f4f0;padding:.6rem;overflow:auto;font-size:13px}
code{font-size:13px}dt{font-weight:600}table{border-collapse:collapse}td{border-top:1px solid #e2e4de;padding:4px 8px;vertical-align:top}
</style></head><body>
<header><h1>${escape(info.title)} <small>${escape(info.version)}</small></h1>${prose(info.description)}
<p>Machine-readable: <a href="/openapi.json">/openapi.json</a> (OpenAPI ${escape(String(doc.openapi))}).</p>
<nav><ul>${operations.map((o) => `<li><a href="#${`${o.method}-${o.path}`.replace(/[^a-z0-9]+/gi, '-')}">${o.method.toUpperCase()} ${escape(o.path)}</a></li>`).join('')}</ul></nav></header>
<main>
${tags.map((tag) => `<h2>${escape(tag)}</h2>${operations.filter((o) => o.tag === tag).map((o) => operationHtml(o.method, o.path, o.op)).join('\n')}`).join('\n')}
<h2 id="errors">Error codes</h2>
<p>Every error body is <code>{ "error": { "code", "message", "field"? } }</code>.</p>
<table>${Object.entries(ERROR_CODES).map(([code, text]) => `<tr><td><code>${escape(code)}</code></td><td>${escape(text)}</td></tr>`).join('')}</table>
<h2>Schemas</h2>
${schemas.map(([name, schema]) => `<h3 id="schema-${escape(name)}">${escape(name)}</h3><pre>${escape(schemaText(schema))}</pre>`).join('\n')}
</main></body></html>`;
}
