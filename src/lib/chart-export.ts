import { theme } from './palette';

/**
 * Saving a chart as a file. An SVG is serialised with the properties its CSS gave it written
 * inline and with the app's font embedded, so that it looks the same outside the page; a PNG is
 * that SVG drawn on a canvas at twice its size (or a canvas chart's own pixels).
 */

const SVG_NS = 'http://www.w3.org/2000/svg';
/** Properties a chart may take from a class rather than an attribute. */
const INLINE = ['fill', 'stroke', 'stroke-width', 'stroke-dasharray', 'opacity', 'fill-opacity', 'font-size', 'font-weight', 'font-style'] as const;

let fontCss: Promise<string> | null = null;

/** The @font-face rules of the app's font (Latin subset) with their files as data URLs; '' if they cannot be read. */
function embeddedFontCss(): Promise<string> {
  fontCss ??= (async () => {
    const rules: { weight: string; style: string; url: string }[] = [];
    for (const sheet of Array.from(document.styleSheets)) {
      let list: CSSRuleList;
      try {
        list = sheet.cssRules;
      } catch {
        continue;
      }
      for (const rule of Array.from(list)) {
        if (!(rule instanceof CSSFontFaceRule)) continue;
        const s = rule.style;
        if (!/public sans/i.test(s.getPropertyValue('font-family'))) continue;
        // Only the Latin subset (its range starts at U+0000, however the browser writes it).
        const range = s.getPropertyValue('unicode-range');
        if (range && !/^\s*U\+0+-0*FF\b/i.test(range)) continue;
        const url = /url\(["']?([^"')]+\.woff2)["']?\)/.exec(s.getPropertyValue('src'))?.[1];
        if (url) rules.push({ weight: s.getPropertyValue('font-weight') || '400', style: s.getPropertyValue('font-style') || 'normal', url });
      }
    }
    const faces = await Promise.all(
      rules
        .filter((r) => r.style === 'normal' && ['400', '600'].includes(r.weight))
        .map(async (r) => {
          const blob = await (await fetch(r.url)).blob();
          const data = await blobToDataUrl(blob);
          return `@font-face{font-family:'Public Sans';font-weight:${r.weight};font-style:normal;src:url(${data}) format('woff2');}`;
        }),
    );
    return faces.join('');
  })().catch(() => '');
  return fontCss;
}

function blobToDataUrl(blob: Blob): Promise<string> {
  return new Promise((resolve, reject) => {
    const reader = new FileReader();
    reader.onload = () => resolve(String(reader.result));
    reader.onerror = () => reject(reader.error);
    reader.readAsDataURL(blob);
  });
}

/** The size an SVG is saved at: its viewBox, else its drawn size. */
function svgSize(svg: SVGSVGElement): { width: number; height: number } {
  const vb = svg.viewBox?.baseVal;
  if (vb && vb.width > 0 && vb.height > 0) return { width: vb.width, height: vb.height };
  const r = svg.getBoundingClientRect();
  return { width: Math.max(1, Math.round(r.width)), height: Math.max(1, Math.round(r.height)) };
}

/** A stand-alone SVG document of a chart on the paper background. */
export async function serialiseSvg(svg: SVGSVGElement): Promise<string> {
  const { width, height } = svgSize(svg);
  const clone = svg.cloneNode(true) as SVGSVGElement;
  // Copy class-given styles of the live elements onto the clone, element by element.
  const live = [svg, ...Array.from(svg.querySelectorAll('*'))];
  const copies = [clone, ...Array.from(clone.querySelectorAll('*'))];
  live.forEach((el, i) => {
    if (i === 0 || !el.getAttribute('class')) return;
    const cs = getComputedStyle(el);
    const target = copies[i] as SVGElement;
    for (const p of INLINE) {
      const v = cs.getPropertyValue(p);
      if (v) target.style.setProperty(p, v);
    }
    target.removeAttribute('class');
  });
  clone.setAttribute('xmlns', SVG_NS);
  clone.setAttribute('width', String(width));
  clone.setAttribute('height', String(height));
  if (!clone.getAttribute('viewBox')) clone.setAttribute('viewBox', `0 0 ${width} ${height}`);
  clone.style.fontFamily = "'Public Sans', ui-sans-serif, system-ui, sans-serif";
  clone.removeAttribute('class');
  const css = await embeddedFontCss();
  if (css) {
    const style = document.createElementNS(SVG_NS, 'style');
    style.textContent = css;
    clone.insertBefore(style, clone.firstChild);
  }
  const paper = document.createElementNS(SVG_NS, 'rect');
  paper.setAttribute('width', '100%');
  paper.setAttribute('height', '100%');
  paper.setAttribute('fill', theme.paperRaised);
  clone.insertBefore(paper, css ? clone.firstChild!.nextSibling : clone.firstChild);
  return `<?xml version="1.0" encoding="UTF-8"?>\n${new XMLSerializer().serializeToString(clone)}`;
}

export function downloadBlob(blob: Blob, filename: string): void {
  const url = URL.createObjectURL(blob);
  const a = document.createElement('a');
  a.href = url;
  a.download = filename;
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}

/** A file name from a chart's title: ASCII, lower case, words joined by hyphens (μ becomes "mu"). */
export function chartFileName(title: string, ext: 'svg' | 'png'): string {
  const base = title
    .replace(/μ/g, 'mu')
    .replace(/σ/g, 'sigma')
    .replace(/ρ/g, 'rho')
    .normalize('NFKD')
    .replace(/[\u0300-\u036f]/g, '')
    .replace(/[^A-Za-z0-9\s-]/g, '')
    .trim()
    .toLowerCase()
    .replace(/[\s_]+/g, '-')
    .replace(/-+/g, '-');
  return `${base || 'chart'}.${ext}`;
}

export async function downloadSvg(svg: SVGSVGElement, title: string): Promise<void> {
  downloadBlob(new Blob([await serialiseSvg(svg)], { type: 'image/svg+xml' }), chartFileName(title, 'svg'));
}

/**
 * Draw SVG markup on a canvas at `scale` times its size; resolves with the PNG. The image is
 * loaded from a data: URL, which the app's content security policy allows for images.
 */
export async function svgMarkupToPng(markup: string, width: number, height: number, scale = 2): Promise<Blob> {
  const url = `data:image/svg+xml;charset=utf-8,${encodeURIComponent(markup)}`;
  const img = new Image();
  img.decoding = 'sync';
  await new Promise<void>((resolve, reject) => {
    img.onload = () => resolve();
    img.onerror = () => reject(new Error('The chart could not be drawn as an image.'));
    img.src = url;
  });
  const canvas = document.createElement('canvas');
  canvas.width = Math.round(width * scale);
  canvas.height = Math.round(height * scale);
  const ctx = canvas.getContext('2d');
  if (!ctx) throw new Error('This browser cannot draw on a canvas.');
  ctx.fillStyle = theme.paperRaised;
  ctx.fillRect(0, 0, canvas.width, canvas.height);
  ctx.drawImage(img, 0, 0, canvas.width, canvas.height);
  return await canvasToPng(canvas);
}

/**
 * A copy of a drawn canvas with a band on top carrying `label` (the analysis's plot labels),
 * so that a PNG made from a canvas chart names its experiment and status as the SVG does.
 * Without a label the canvas is returned as it is.
 */
export function withLabelBand(canvas: HTMLCanvasElement, label: string): HTMLCanvasElement {
  if (!label) return canvas;
  const scale = canvas.width / Math.max(1, canvas.clientWidth || canvas.width);
  const band = Math.round(22 * scale);
  const out = document.createElement('canvas');
  out.width = canvas.width;
  out.height = canvas.height + band;
  const ctx = out.getContext('2d');
  if (!ctx) throw new Error('This browser cannot draw on a canvas.');
  ctx.fillStyle = theme.paperRaised;
  ctx.fillRect(0, 0, out.width, out.height);
  ctx.fillStyle = theme.ink;
  ctx.font = `600 ${Math.round(12 * scale)}px "Public Sans", system-ui, sans-serif`;
  ctx.textBaseline = 'middle';
  ctx.fillText(label, Math.round(6 * scale), band / 2);
  ctx.drawImage(canvas, 0, band);
  return out;
}

export function canvasToPng(canvas: HTMLCanvasElement): Promise<Blob> {
  return new Promise((resolve, reject) => canvas.toBlob((b) => (b ? resolve(b) : reject(new Error('The image could not be made.'))), 'image/png'));
}

export async function downloadPng(svg: SVGSVGElement, title: string): Promise<void> {
  const { width, height } = svgSize(svg);
  downloadBlob(await svgMarkupToPng(await serialiseSvg(svg), width, height), chartFileName(title, 'png'));
}
