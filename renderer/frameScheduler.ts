/**
 * Redraw at most once per display frame however many updates arrive: readings come
 * in batches up to 20 times a second and results as often, and drawing each one
 * would spend the frame budget twice over. Every request in a frame is coalesced
 * into one call of `draw` on the next animation frame.
 */
export type FrameRequester = (callback: (time_ms: number) => void) => number;

export interface FrameScheduler {
  /** Ask for a redraw on the next frame (cheap to call many times). */
  request(): void;
  /** Frames drawn so far. */
  readonly frames: number;
}

export function frameScheduler(draw: (time_ms: number) => void, requestFrame: FrameRequester): FrameScheduler {
  let pending = false;
  let frames = 0;
  const run = (time_ms: number): void => {
    pending = false;
    frames++;
    draw(time_ms);
  };
  return {
    request() {
      if (pending) return;
      pending = true;
      requestFrame(run);
    },
    get frames() {
      return frames;
    },
  };
}
