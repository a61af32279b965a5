import { describe, expect, it } from 'vitest';
import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { SchematicStrip, type SchematicStripProps } from '@client/components/schematic/schematic-strip';
import { assignLanes, clampRange, isolationEnvelope, niceTicks, zoomRange } from '@client/components/schematic/schematic-layout';

const props: SchematicStripProps = {
  pipeline: { startPosition: 0, endPosition: 30.4, unit: 'mi', name: 'Test line' },
  sites: [{ name: 'Start Station', position: 0 }],
  points: [
    { id: 'v2', tagCode: 'BV-197', kind: 'block_valve', position: 19.7, valveType: 'ball', normalPosition: 'open', remotelyOperable: true },
    { id: 'v1', tagCode: 'BV-149', kind: 'block_valve', position: 14.9, valveType: 'ball', normalPosition: 'open', remotelyOperable: false },
    { id: 'd1', tagCode: 'DR-151', kind: 'drain', position: 15.1 },
    { id: 'k1', tagCode: 'VT-150', kind: 'vent', position: 15 },
  ],
};

const render = (p: SchematicStripProps) => renderToStaticMarkup(createElement(SchematicStrip, p));
const attrs = (html: string, testId: string, name: string) => [...html.matchAll(new RegExp(`data-testid="${testId}"[^>]*?${name}="([^"]*)"`, 'g'))].map((m) => m[1]);

describe('SchematicStrip', () => {
  it('when drawn, then every point is an element with its kind and position, in position order, each with a title', () => {
    const html = render(props);
    expect(attrs(html, 'schematic-point', 'data-position')).toEqual(['14.9', '15', '15.1', '19.7']);
    expect(attrs(html, 'schematic-point', 'data-kind')).toEqual(['block_valve', 'vent', 'drain', 'block_valve']);
    expect(html).toContain('<title>Block valve BV-197 at MP 19.7; ball valve; normally open; can be operated from the control room</title>');
    expect(html).toMatch(/viewBox="0 0 960 \d+"/);
    expect(html).not.toContain('overlay-');
  });

  it('when overlays are given, then the work range, isolated points, plugs and the isolation envelope are drawn', () => {
    const html = render({ ...props, overlays: { workRange: [17.2, 17.4], isolatedPointIds: ['v1'], plugPositions: [19.2] } });
    expect(attrs(html, 'overlay-work', 'data-from')).toEqual(['17.2']);
    expect(attrs(html, 'overlay-plug', 'data-position')).toEqual(['19.2']);
    expect(html.match(/data-isolated="true"/g)).toHaveLength(1);
    expect(html).toContain('data-tag="BV-149" data-isolated="true"');
    expect(attrs(html, 'overlay-envelope', 'data-from')).toEqual(['14.9']);
    expect(attrs(html, 'overlay-envelope', 'data-to')).toEqual(['19.2']);
    expect(html).toContain('Isolated section');
  });

  it('when nothing isolates the work on one side, then the envelope says which side is open', () => {
    const html = render({ ...props, overlays: { workRange: [17.2, 17.4], isolatedPointIds: ['v1'] } });
    expect(attrs(html, 'overlay-envelope', 'data-to')).toEqual(['']);
    expect(html).toContain('Open toward the end');
  });

  it('when a section is chosen, then only the points in it are drawn', () => {
    const html = render({ ...props, initialRange: [14, 16] });
    expect(attrs(html, 'schematic-point', 'data-tag')).toEqual(['BV-149', 'VT-150', 'DR-151']);
  });
});

describe('schematic layout', () => {
  it('when ticks are asked for, then they fall on round steps inside the view', () => {
    expect(niceTicks([0, 30.4], 6)).toEqual([0, 10, 20, 30]);
    expect(niceTicks([14, 20.5], 6)).toEqual([14, 16, 18, 20]);
    expect(niceTicks([14, 20.5], 8)).toEqual([14, 15, 16, 17, 18, 19, 20]);
    expect(niceTicks([0.1, 0.35], 5)).toEqual([0.1, 0.15, 0.2, 0.25, 0.3, 0.35]);
  });

  it('when labels would overlap, then they go to the next lane; when there is room, they share a lane', () => {
    expect(assignLanes([{ x: 10, width: 40 }, { x: 30, width: 40 }, { x: 50, width: 40 }, { x: 100, width: 10 }])).toEqual([0, 1, 2, 0]);
  });

  it('when zooming or choosing a range past the ends, then the view stays on the line and no narrower than the minimum', () => {
    expect(clampRange([-5, 3], [0, 30], 0.1)).toEqual([0, 8]);
    expect(clampRange([29, 40], [0, 30], 0.1)).toEqual([19, 30]);
    expect(zoomRange([0, 30], 0.5, [0, 30], 0.1)).toEqual([7.5, 22.5]);
    expect(zoomRange([10, 10.1], 0.1, [0, 30], 0.1)[1] - zoomRange([10, 10.1], 0.1, [0, 30], 0.1)[0]).toBeCloseTo(0.1, 9);
  });

  it('when barriers surround the work, then the envelope runs from the nearest on each side', () => {
    expect(isolationEnvelope([17.2, 17.4], [0, 14.9, 15, 19.7, 25.2])).toEqual({ from: 15, to: 19.7 });
    expect(isolationEnvelope([17.4, 17.2], [19.7])).toEqual({ from: null, to: 19.7 });
  });
});
