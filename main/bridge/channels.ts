/**
 * IPC channel names, apart from the schemas so the sandboxed preload can be bundled
 * without zod (it forwards; the main process validates).
 */
export const CHANNELS = Object.freeze({
  request: 'rateline:request',
  event: 'rateline:event',
});
