import { describe, expect, it } from 'vitest';
import { num, plusMinus, tickText, duration } from '../../src/render/html/format.js';
import { renderPlot } from '../../src/render/html/plot.js';
import { attributesOf, linePoints, seriesOf } from './svgData.js';

describe('renderPlot(spec)', () => {
  const svg = renderPlot({
    id: 'test-log',
    title: 'A <log> plot',
    description: 'desc & more',
    x: { label: 'signal (ADU)', scale: 'log' },
    y: { label: 'noise (ADU)', scale: 'log' },
    series: [
      {
        kind: 'points',
        name: 'pts',
        color: 'blue',
        marker: 'circle',
        points: [
          { x: 10, y: 3 },
          { x: 0, y: 5 },
          { x: 1000, y: -1 },
          { x: 1e4, y: 100, yError: 10 },
        ],
      },
      { kind: 'line', name: 'line', color: 'ink', points: [{ x: 10, y: 3 }, { x: 1e4, y: 100 }] },
      { kind: 'rule', axis: 'y', value: 2, name: 'floor', color: 'bluishGreen', label: 'floor 2' },
    ],
  });

  it('renderPlot(spec) is an accessible image: role, aria-label, title and desc, escaped', () => {
    const open = attributesOf(svg.slice(0, svg.indexOf('>') + 1));
    expect(open.role).toBe('img');
    expect(open['aria-label']).toBe('A <log> plot');
    expect(open['data-plot']).toBe('test-log');
    expect(svg).toContain('<title>A &lt;log&gt; plot</title>');
    expect(svg).toContain('desc &amp; more</desc>');
  });

  it('renderPlot(spec) on log axes leaves out values ≤ 0 and counts them', () => {
    const [pts, line, rule] = seriesOf(svg).sort((a, b) => a.attrs['data-series']!.localeCompare(b.attrs['data-series']!)).reverse();
    expect(pts!.attrs['data-series']).toBe('pts');
    expect(pts!.points.map((p) => [Number(p['data-x']), Number(p['data-y'])])).toEqual([
      [10, 3],
      [1e4, 100],
    ]);
    expect(pts!.attrs['data-skipped']).toBe('2');
    expect(pts!.errors.map((e) => [Number(e['data-low']), Number(e['data-high'])])).toEqual([[90, 110]]);
    expect(linePoints(line!.attrs['data-points'])).toEqual([
      [10, 3],
      [1e4, 100],
    ]);
    expect(rule!.attrs['data-value']).toBe('2');
  });

  it('renderPlot(spec) labels decades on a log axis spanning more than 2.5 decades and draws a legend', () => {
    const xAxis = svg.slice(svg.indexOf('class="axis x-axis"'), svg.indexOf('class="axis y-axis"'));
    const yAxis = svg.slice(svg.indexOf('class="axis y-axis"'), svg.indexOf('class="data"'));
    for (const t of ['10', '100', '1000', '10\u2009000']) expect(xAxis).toContain(`>${t}</text>`);
    expect(xAxis).not.toContain('>20</text>'); // x spans 3 decades: decades only
    for (const t of ['2', '5', '10', '20', '50', '100']) expect(yAxis).toContain(`>${t}</text>`); // y spans < 2.5: 1-2-5
    expect(svg).toContain('class="legend"');
    expect(svg).toContain('>floor 2</text>');
    const domain = attributesOf(svg.slice(0, svg.indexOf('>') + 1))['data-y-domain']!.split(',').map(Number);
    expect(domain[0]).toBeLessThanOrEqual(2);
    expect(domain[1]).toBeGreaterThanOrEqual(110);
  });

  it('renderPlot(spec) with a time axis labels UTC clock times', () => {
    const t0 = Date.UTC(2031, 9, 4, 20, 0);
    const s = renderPlot({
      id: 't',
      title: 't',
      description: 't',
      x: { label: 'time', scale: 'time' },
      y: { label: 'v' },
      series: [{ kind: 'points', name: 'a', color: 'blue', marker: 'square', points: [0, 1, 2].map((i) => ({ x: t0 + i * 1.8e6, y: i })) }],
    });
    expect(s).toContain('>20:30</text>');
    expect(s).toContain('>21:00</text>');
  });
});

describe('number wording', () => {
  it('num(value, digits) gives significant figures, integers plainly, ×10ⁿ for extremes, a dash for missing', () => {
    expect(num(0.31974, 3)).toBe('0.320');
    expect(num(2000, 5)).toBe('2000');
    expect(num(15744.2, 3)).toBe('15\u2009744');
    expect(num(2.5e-5, 2)).toBe('2.5\u00d710\u207b\u2075');
    expect(num(-3.14159, 3)).toBe('\u22123.14');
    expect(num(null)).toBe('\u2013');
    expect(num(Number.NaN)).toBe('\u2013');
  });

  it('plusMinus(value, u, unit) rounds the value to the uncertainty’s second significant digit', () => {
    expect(plusMinus(0.319743, 0.003812, 'e\u207b/ADU')).toBe('0.3197\u00a0\u00b1\u00a00.0038\u00a0e\u207b/ADU');
    expect(plusMinus(15744, 230, 'e\u207b')).toBe('15\u2009740\u00a0\u00b1\u00a0230\u00a0e\u207b');
  });

  it('tickText(v) and duration(s) read naturally', () => {
    expect(tickText(0.5)).toBe('0.5');
    expect(tickText(1e6)).toBe('10\u2076');
    expect(tickText(20000)).toBe('20\u2009000');
    expect(duration(75.8)).toBe('75.8\u00a0s');
    expect(duration(10800)).toBe('3\u00a0h 00\u00a0min');
  });
});
