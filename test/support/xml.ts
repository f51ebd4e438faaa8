/**
 * A minimal XML well-formedness check for the SVG figures (no new packages): one root element,
 * balanced tags, quoted and non-repeated attributes, '&' only in entities and no '>' in text.
 * Its own tests (malformed inputs are reported) are in test/routes/shadow.test.ts.
 */

/** The problems found in `text` (empty when it is well-formed XML by the rules above); an XML declaration may lead. */
export function checkXml(text: string): string[] {
  const problems: string[] = [];
  let s = text.replace(/^<\?xml[^?]*\?>\s*/, '');
  const stack: string[] = [];
  let roots = 0;
  const TAG = /<[^<>]*>/g;
  let last = 0;
  const textOk = (t: string) => !/&(?!(amp|lt|gt|quot|apos|#\d+|#x[0-9a-fA-F]+);)/.test(t) && !t.includes('>');
  for (let m = TAG.exec(s); m; m = TAG.exec(s)) {
    const between = s.slice(last, m.index);
    if (!textOk(between)) problems.push(`bad text: ${between.slice(0, 40)}`);
    if (stack.length === 0 && between.trim() !== '') problems.push('text outside the root');
    last = m.index + m[0].length;
    const tag = m[0];
    const close = /^<\/([A-Za-z_][\w:.-]*)\s*>$/.exec(tag);
    if (close) {
      if (stack.pop() !== close[1]) problems.push(`unbalanced </${close[1]}>`);
      continue;
    }
    const open = /^<([A-Za-z_][\w:.-]*)((?:\s+[A-Za-z_:][\w:.-]*="[^"<]*")*)\s*(\/?)>$/.exec(tag);
    if (!open) {
      problems.push(`malformed tag ${tag.slice(0, 60)}`);
      continue;
    }
    const names = [...open[2].matchAll(/([A-Za-z_:][\w:.-]*)=/g)].map((x) => x[1]);
    if (new Set(names).size !== names.length) problems.push(`duplicate attribute in ${tag.slice(0, 60)}`);
    for (const v of open[2].matchAll(/="([^"]*)"/g)) if (!textOk(v[1])) problems.push(`bad attribute value ${v[1].slice(0, 40)}`);
    if (stack.length === 0) roots++;
    if (open[3] !== '/') stack.push(open[1]);
  }
  s = s.slice(last);
  if (s.trim() !== '') problems.push('text after the root');
  if (stack.length > 0) problems.push(`unclosed ${stack.join(', ')}`);
  if (roots !== 1) problems.push(`${roots} root elements`);
  return problems;
}
