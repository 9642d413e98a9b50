/**
 * A small well-formedness check for XML (enough for SVG files we write): one root element, every tag closed in
 * order, quoted attributes without duplicates, only the five predefined entities or numeric references, no stray
 * '<' or '&'. Returns the elements found (name and attributes) so tests can look inside.
 */

export interface XmlElement {
  name: string;
  attributes: Record<string, string>;
  /** Text directly inside the element (entities decoded). */
  text: string;
}

const NAME = /^[A-Za-z_:][A-Za-z0-9_.:-]*$/;
const ENTITY = /&(?:amp|lt|gt|quot|apos|#[0-9]+|#x[0-9a-fA-F]+);/g;

function checkText(text: string, where: string): string {
  if (text.includes('<')) throw new Error(`stray "<" in ${where}`);
  const stripped = text.replace(ENTITY, '');
  if (stripped.includes('&')) throw new Error(`bad entity in ${where}: ${text.slice(0, 60)}`);
  return text
    .replace(/&lt;/g, '<')
    .replace(/&gt;/g, '>')
    .replace(/&quot;/g, '"')
    .replace(/&apos;/g, "'")
    .replace(/&amp;/g, '&');
}

function parseAttributes(source: string, tag: string): Record<string, string> {
  const attrs: Record<string, string> = {};
  let rest = source.trim();
  while (rest.length > 0) {
    const m = /^([^\s=]+)\s*=\s*("([^"]*)"|'([^']*)')\s*/.exec(rest);
    if (!m) throw new Error(`malformed attributes in <${tag}>: ${rest.slice(0, 60)}`);
    const name = m[1]!;
    if (!NAME.test(name)) throw new Error(`bad attribute name ${name} in <${tag}>`);
    if (name in attrs) throw new Error(`duplicate attribute ${name} in <${tag}>`);
    attrs[name] = checkText(m[3] ?? m[4] ?? '', `attribute ${name} of <${tag}>`);
    rest = rest.slice(m[0].length);
  }
  return attrs;
}

export function checkXml(xml: string): XmlElement[] {
  let i = 0;
  const stack: XmlElement[] = [];
  const all: XmlElement[] = [];
  let roots = 0;
  const s = xml.replace(/^\uFEFF/, '');
  if (s.startsWith('<?xml')) {
    const end = s.indexOf('?>');
    if (end < 0) throw new Error('unterminated XML declaration');
    i = end + 2;
  }
  while (i < s.length) {
    const lt = s.indexOf('<', i);
    const text = lt < 0 ? s.slice(i) : s.slice(i, lt);
    if (stack.length === 0) {
      if (text.trim() !== '') throw new Error(`text outside the root element: ${text.trim().slice(0, 40)}`);
    } else {
      stack[stack.length - 1]!.text += checkText(text, `<${stack[stack.length - 1]!.name}>`);
    }
    if (lt < 0) break;
    if (s.startsWith('<!--', lt)) {
      const end = s.indexOf('-->', lt + 4);
      if (end < 0) throw new Error('unterminated comment');
      i = end + 3;
      continue;
    }
    const gt = s.indexOf('>', lt);
    if (gt < 0) throw new Error('unterminated tag');
    const inner = s.slice(lt + 1, gt);
    i = gt + 1;
    if (inner.startsWith('/')) {
      const name = inner.slice(1).trim();
      const open = stack.pop();
      if (!open || open.name !== name) throw new Error(`</${name}> closes <${open?.name ?? 'nothing'}>`);
      continue;
    }
    const selfClosing = inner.endsWith('/');
    const body = selfClosing ? inner.slice(0, -1) : inner;
    const m = /^([^\s/>]+)([\s\S]*)$/.exec(body);
    if (!m || !NAME.test(m[1]!)) throw new Error(`bad tag <${inner.slice(0, 40)}>`);
    const el: XmlElement = { name: m[1]!, attributes: parseAttributes(m[2]!, m[1]!), text: '' };
    if (stack.length === 0) roots += 1;
    if (roots > 1) throw new Error('more than one root element');
    all.push(el);
    if (!selfClosing) stack.push(el);
  }
  if (stack.length > 0) throw new Error(`<${stack[stack.length - 1]!.name}> is never closed`);
  if (roots !== 1) throw new Error('no root element');
  return all;
}
