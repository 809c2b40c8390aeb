/**
 * A drift chart drawn as vector paths: one line per device of a parameter's change from time zero
 * against the read points, the plan's limits as dashed lines, 0 always on the axis, tick labels
 * kept inside the box, failed devices in red. Points beyond the axis (a catastrophic reading) are
 * drawn at its edge as open triangles and counted under the chart.
 */
import { clampTo, mapLinear, niceScale, placeLabels, tickLabel, yDomain } from './chart-scale';
import { ALERT, INK, MUTED, RULE, pdfText, type Box, type Pdf, FONT } from './pdf-doc';

export interface DriftSeries {
  /** The device (serial). */
  label: string;
  points: Array<{ x: number; y: number }>;
  failed: boolean;
}

export interface DriftChart {
  title: string;
  xLabel: string;
  yLabel: string;
  series: DriftSeries[];
  limits: Array<{ y: number; label: string }>;
  /** A sentence under the chart (how the limit reads, what is left out). */
  note?: string;
}

/** The chart's scales and the values drawn at the edge: what drawDriftChart will draw (tests read this). */
export function driftChartLayout(chart: DriftChart) {
  const xs = chart.series.flatMap((s) => s.points.map((p) => p.x));
  const ys = chart.series.flatMap((s) => s.points.map((p) => p.y));
  const x = niceScale(0, Math.max(0, ...xs.filter(Number.isFinite)), 5);
  const d = yDomain(
    ys,
    chart.limits.map((l) => l.y),
  );
  const y = niceScale(d.lo, d.hi, 6);
  return { x, y, beyond: d.beyond };
}

/** Draws the chart inside `box` (title on top, note below); the cursor ends under the box. */
export function drawDriftChart(doc: Pdf, box: Box, chart: DriftChart): void {
  const { x: xs, y: ys, beyond } = driftChartLayout(chart);
  doc.save();
  doc.font(FONT.bold).fontSize(9.5).fillColor(INK);
  doc.text(pdfText(chart.title), box.x, box.y, { width: box.w, lineBreak: false });
  doc.font(FONT.regular).fontSize(7);
  const yLabels = ys.ticks.map(tickLabel);
  const gutter = Math.max(...yLabels.map((l) => doc.widthOfString(l))) + 6;
  const plot = { x: box.x + gutter + 12, y: box.y + 16, w: box.w - gutter - 16, h: box.h - 16 - 30 };
  const px = mapLinear(xs, plot.x, plot.x + plot.w);
  const py = mapLinear(ys, plot.y + plot.h, plot.y);

  // Grid, axes and tick labels.
  doc.lineWidth(0.4).strokeColor(RULE);
  for (const t of ys.ticks)
    doc
      .moveTo(plot.x, py(t))
      .lineTo(plot.x + plot.w, py(t))
      .stroke();
  for (const t of xs.ticks)
    doc
      .moveTo(px(t), plot.y)
      .lineTo(px(t), plot.y + plot.h)
      .stroke();
  doc
    .lineWidth(0.9)
    .strokeColor(INK)
    .moveTo(plot.x, py(0))
    .lineTo(plot.x + plot.w, py(0))
    .stroke();
  doc.rect(plot.x, plot.y, plot.w, plot.h).lineWidth(0.6).strokeColor(MUTED).stroke();
  doc.fillColor(MUTED);
  ys.ticks.forEach((t, i) => {
    doc.text(yLabels[i], box.x + 10, py(t) - 3.5, { width: gutter, align: 'right', lineBreak: false });
  });
  const xLabels = xs.ticks.map(tickLabel);
  const lefts = placeLabels(
    xLabels.map((l, i) => ({ centre: px(xs.ticks[i]), width: doc.widthOfString(l) })),
    box.x,
    box.x + box.w,
  );
  xLabels.forEach((l, i) => doc.text(l, lefts[i], plot.y + plot.h + 3, { lineBreak: false }));
  doc.text(pdfText(chart.xLabel), plot.x, plot.y + plot.h + 13, { width: plot.w, align: 'center', lineBreak: false });
  doc.save().rotate(-90, { origin: [box.x + 4, plot.y + plot.h / 2] });
  doc.text(pdfText(chart.yLabel), box.x + 4 - plot.h / 2, plot.y + plot.h / 2 - 4, { width: plot.h, align: 'center', lineBreak: false });
  doc.restore();

  // Limits.
  for (const l of chart.limits) {
    if (l.y < ys.min || l.y > ys.max) continue;
    doc
      .lineWidth(0.8)
      .strokeColor(ALERT)
      .dash(4, { space: 3 })
      .moveTo(plot.x, py(l.y))
      .lineTo(plot.x + plot.w, py(l.y))
      .stroke()
      .undash();
    // Above a positive limit, below a negative one, but never outside the plot.
    const above = l.y >= 0 && py(l.y) - 9 >= plot.y;
    doc.fillColor(ALERT).text(pdfText(l.label), plot.x + 3, py(l.y) + (above ? -9 : 2), { lineBreak: false });
  }

  // Devices: passing ones first (grey), failed ones on top (red).
  const ordered = [...chart.series].sort((a, b) => Number(a.failed) - Number(b.failed));
  for (const s of ordered) {
    const pts = [...s.points].sort((a, b) => a.x - b.x).filter((p) => Number.isFinite(p.x) && Number.isFinite(p.y));
    if (!pts.length) continue;
    const colour = s.failed ? ALERT : '#7d8b99';
    doc.lineWidth(s.failed ? 1.1 : 0.6).strokeColor(colour);
    pts.forEach((p, i) => {
      const c = clampTo(p.y, ys.min, ys.max);
      const X = px(p.x);
      const Y = py(c.v);
      if (i === 0) doc.moveTo(X, Y);
      else doc.lineTo(X, Y);
    });
    doc.stroke();
    for (const p of pts) {
      const c = clampTo(p.y, ys.min, ys.max);
      const X = px(p.x);
      const Y = py(c.v);
      if (c.clipped) {
        const dir = p.y > ys.max ? -1 : 1;
        doc
          .polygon([X - 3, Y - dir * 4], [X + 3, Y - dir * 4], [X, Y])
          .lineWidth(0.8)
          .strokeColor(colour)
          .stroke();
      } else doc.circle(X, Y, s.failed ? 1.6 : 1.1).fill(colour);
    }
  }

  const failed = chart.series.filter((s) => s.failed).length;
  const words = [
    `${chart.series.length} device${chart.series.length === 1 ? '' : 's'}${failed ? `, ${failed} failed (red)` : ''}; dashed lines are the plan's limits.`,
    beyond
      ? `${beyond} reading${beyond === 1 ? ' lies' : 's lie'} beyond the axis and ${beyond === 1 ? 'is' : 'are'} drawn at its edge (open triangles).`
      : '',
    chart.note ?? '',
  ]
    .filter(Boolean)
    .join(' ');
  doc
    .font(FONT.regular)
    .fontSize(7)
    .fillColor(MUTED)
    .text(pdfText(words), box.x, box.y + box.h - 6, { width: box.w });
  doc.restore();
  doc.x = doc.page.margins.left;
  doc.y = Math.max(doc.y, box.y + box.h + 4);
}
