import { describe, expect, it } from 'vitest';
import { frameScheduler } from './frameScheduler';

describe('redraws coalesced to the display frame', () => {
  it('draws once per frame however many updates came in it', () => {
    const queued: ((t: number) => void)[] = [];
    let draws = 0;
    const s = frameScheduler(() => draws++, (cb) => queued.push(cb));
    for (let i = 0; i < 50; i++) s.request();
    expect(queued).toHaveLength(1);
    queued.shift()!(16);
    expect(draws).toBe(1);
    s.request(); s.request();
    expect(queued).toHaveLength(1);
    queued.shift()!(33);
    expect(draws).toBe(2);
    expect(s.frames).toBe(2);
  });

  it('draws nothing when nothing asked (negative control)', () => {
    const queued: ((t: number) => void)[] = [];
    let draws = 0;
    frameScheduler(() => draws++, (cb) => queued.push(cb));
    expect(queued).toHaveLength(0);
    expect(draws).toBe(0);
  });
});
