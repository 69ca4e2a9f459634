import { correlationScale, theme } from '../../lib/palette';
import { rho, type CorrelationMatrix } from './correlation-order';

/**
 * Drawing a correlation matrix on a canvas: the cells are written as pixels (one ImageData for
 * the whole matrix, each cell a square block), the names as text beside them when cells are
 * large enough to be read. The draw is wrapped in Performance marks so its time can be read.
 */

const LUT_SIZE = 511;
let lut: Uint8ClampedArray | null = null;

/** RGB of correlationColour at LUT_SIZE steps over [−1, 1], computed once. */
function colourTable(): Uint8ClampedArray {
  if (lut) return lut;
  lut = new Uint8ClampedArray(LUT_SIZE * 3);
  for (let k = 0; k < LUT_SIZE; k++) {
    const [r, g, b] = parseRgb(correlationScale(-1 + (2 * k) / (LUT_SIZE - 1)));
    lut[k * 3] = r;
    lut[k * 3 + 1] = g;
    lut[k * 3 + 2] = b;
  }
  return lut;
}

/** "rgb(r, g, b)" or "#rrggbb" to numbers. */
export function parseRgb(colour: string): [number, number, number] {
  const m = /rgba?\((\d+),\s*(\d+),\s*(\d+)/.exec(colour);
  if (m) return [Number(m[1]), Number(m[2]), Number(m[3])];
  const h = /^#([0-9a-f]{2})([0-9a-f]{2})([0-9a-f]{2})$/i.exec(colour);
  if (h) return [parseInt(h[1], 16), parseInt(h[2], 16), parseInt(h[3], 16)];
  return [217, 207, 189];
}

function lutIndex(v: number): number {
  if (!Number.isFinite(v)) return (LUT_SIZE - 1) / 2;
  const c = v < -1 ? -1 : v > 1 ? 1 : v;
  return Math.round(((c + 1) / 2) * (LUT_SIZE - 1));
}

export type MatrixLayout = {
  /** indices into the matrix, in display order */
  order: number[];
  /** CSS pixels per cell */
  cell: number;
  /** room for the names, left and top (0 when the cells are too small for text) */
  labelW: number;
  labelH: number;
  width: number;
  height: number;
  /** positions (0…n) before which a new group starts; lines are drawn there */
  boundaries: number[];
};

const MAX_MATRIX_PX = 600;
const LABEL_ROOM = 132;

export function layoutMatrix(order: number[], boundaries: number[] = []): MatrixLayout {
  const n = Math.max(1, order.length);
  const cell = Math.max(1, Math.min(32, Math.floor(MAX_MATRIX_PX / n)));
  const labels = cell >= 9;
  const labelW = labels ? LABEL_ROOM : 0;
  const labelH = labels ? LABEL_ROOM : 0;
  return { order, cell, labelW, labelH, width: labelW + n * cell + 2, height: labelH + n * cell + 2, boundaries };
}

/** Draw the matrix at the canvas's device-pixel size; returns the milliseconds it took. */
export function drawCorrelation(canvas: HTMLCanvasElement, m: CorrelationMatrix, layout: MatrixLayout, dpr = 1): number {
  performance.mark('correlation-draw-start');
  const { order, cell, labelW, labelH, width, height } = layout;
  canvas.width = Math.round(width * dpr);
  canvas.height = Math.round(height * dpr);
  const ctx = canvas.getContext('2d');
  if (ctx) {
    ctx.setTransform(1, 0, 0, 1, 0, 0);
    ctx.fillStyle = theme.paperRaised;
    ctx.fillRect(0, 0, canvas.width, canvas.height);
    const n = order.length;
    const px = Math.max(1, Math.round(cell * dpr));
    const side = n * px;
    if (n > 0) {
      const colours = colourTable();
      const image = ctx.createImageData(side, side);
      const data = image.data;
      const row = new Uint8ClampedArray(side * 4);
      const N = m.names.length;
      for (let r = 0; r < n; r++) {
        const base = order[r] * N;
        // One pixel row for matrix row r, then copied px times.
        for (let c = 0; c < n; c++) {
          const k = lutIndex(m.values[base + order[c]]) * 3;
          const red = colours[k];
          const green = colours[k + 1];
          const blue = colours[k + 2];
          for (let p = c * px, end = p + px; p < end; p++) {
            const o = p * 4;
            row[o] = red;
            row[o + 1] = green;
            row[o + 2] = blue;
            row[o + 3] = 255;
          }
        }
        for (let y = r * px, end = y + px; y < end; y++) data.set(row, y * side * 4);
      }
      ctx.putImageData(image, Math.round((labelW + 1) * dpr), Math.round((labelH + 1) * dpr));
    }
    ctx.scale(dpr, dpr);
    ctx.strokeStyle = theme.rule;
    ctx.lineWidth = 1;
    ctx.strokeRect(labelW + 0.5, labelH + 0.5, n * cell + 1, n * cell + 1);
    if (layout.boundaries.length) {
      // Half a pixel in, so that the 1 px line covers whole pixels rather than blurring over two.
      ctx.strokeStyle = 'rgba(29, 27, 24, 0.7)';
      ctx.beginPath();
      for (const b of layout.boundaries) {
        const x = labelW + 1 + b * cell - 0.5;
        const y = labelH + 1 + b * cell - 0.5;
        ctx.moveTo(x, labelH + 1);
        ctx.lineTo(x, labelH + 1 + n * cell);
        ctx.moveTo(labelW + 1, y);
        ctx.lineTo(labelW + 1 + n * cell, y);
      }
      ctx.stroke();
    }
    if (labelW > 0) {
      ctx.fillStyle = theme.ink;
      ctx.font = `${Math.min(11, cell - 1)}px 'Public Sans', sans-serif`;
      ctx.textBaseline = 'middle';
      ctx.textAlign = 'right';
      const fit = (s: string) => (s.length > 22 ? `${s.slice(0, 21)}…` : s);
      order.forEach((i, r) => ctx.fillText(fit(m.names[i]), labelW - 4, labelH + 1 + r * cell + cell / 2));
      ctx.save();
      ctx.textAlign = 'left';
      order.forEach((i, c) => {
        ctx.save();
        ctx.translate(labelW + 1 + c * cell + cell / 2, labelH - 4);
        ctx.rotate(-Math.PI / 2);
        ctx.fillText(fit(m.names[i]), 0, 0);
        ctx.restore();
      });
      ctx.restore();
    }
  }
  performance.mark('correlation-draw-end');
  const measure = performance.measure('correlation-draw', 'correlation-draw-start', 'correlation-draw-end');
  return measure?.duration ?? 0;
}

/** The same picture as an SVG document: one rect per cell, the names as text. */
export function correlationSvg(m: CorrelationMatrix, layout: MatrixLayout, plotLabel = ''): string {
  const { order, cell, labelW, labelH, width, height } = layout;
  const esc = (s: string) => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
  const parts: string[] = [
    `<?xml version="1.0" encoding="UTF-8"?>`,
    `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}" font-family="'Public Sans', sans-serif" shape-rendering="crispEdges">`,
    `<rect width="100%" height="100%" fill="${theme.paperRaised}"/>`,
    ...(plotLabel ? [`<text class="plot-label" x="4" y="14" font-size="11" font-weight="700" fill="${theme.ink}">${esc(plotLabel)}</text>`] : []),
  ];
  order.forEach((i, r) =>
    order.forEach((j, c) => {
      const v = rho(m, i, j);
      parts.push(`<rect x="${labelW + 1 + c * cell}" y="${labelH + 1 + r * cell}" width="${cell}" height="${cell}" fill="${correlationScale(v)}"><title>${esc(m.names[i])} × ${esc(m.names[j])}: ρ = ${v.toFixed(3)}</title></rect>`);
    }),
  );
  const n = order.length;
  for (const b of layout.boundaries) {
    const x = labelW + 1 + b * cell;
    const y = labelH + 1 + b * cell;
    parts.push(`<line x1="${x}" x2="${x}" y1="${labelH + 1}" y2="${labelH + 1 + n * cell}" stroke="${theme.ink}" stroke-opacity="0.7"/>`);
    parts.push(`<line x1="${labelW + 1}" x2="${labelW + 1 + n * cell}" y1="${y}" y2="${y}" stroke="${theme.ink}" stroke-opacity="0.7"/>`);
  }
  if (labelW > 0) {
    const size = Math.min(11, cell - 1);
    order.forEach((i, r) => parts.push(`<text x="${labelW - 4}" y="${labelH + 1 + r * cell + cell / 2}" dy="0.32em" text-anchor="end" font-size="${size}" fill="${theme.ink}">${esc(m.names[i])}</text>`));
    order.forEach((i, c) => {
      const x = labelW + 1 + c * cell + cell / 2;
      parts.push(`<text transform="translate(${x},${labelH - 4}) rotate(-90)" dy="0.32em" font-size="${size}" fill="${theme.ink}">${esc(m.names[i])}</text>`);
    });
  }
  parts.push('</svg>');
  return parts.join('\n');
}
