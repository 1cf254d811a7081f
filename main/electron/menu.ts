/**
 * The application menu, with labels of our own. Run actions go straight to the bench
 * service (the same requests the screen sends); files are opened and saved through the
 * native dialogs only. No accelerators on the run actions: the screen's own keyboard
 * shortcuts (start, stop, mark) must reach the page.
 */
import type { BridgeRequest } from '../bridge/contract';
import type { MenuItemLike } from './electronApi';

export function menuTemplate(send: (request: BridgeRequest) => void, isMac: boolean): MenuItemLike[] {
  const item = (label: string, request: BridgeRequest): MenuItemLike => ({ label, click: () => send(request) });
  return [
    {
      label: 'Rateline',
      submenu: [
        ...(isMac ? [{ role: 'about' as const, label: 'About Rateline' }, { type: 'separator' as const }] : []),
        { role: 'quit', label: 'Quit Rateline', accelerator: 'CmdOrCtrl+Q' },
      ],
    },
    {
      label: 'Run',
      submenu: [
        item('Start the run', { type: 'start' }),
        item('Stop the run', { type: 'stop' }),
        { type: 'separator' },
        item('Mixed: time zero now', { type: 'mixed' }),
        item('Mark an event', { type: 'markEvent', note: '' }),
        { type: 'separator' },
        item('Take the blank', { type: 'takeBlank' }),
        item('Use the simulated instrument (demo)', { type: 'chooseSource', source: { kind: 'simulated' } }),
      ],
    },
    {
      label: 'Records',
      submenu: [
        item('Play back a recorded run…', { type: 'openRecord' }),
        item('Export this run as CSV…', { type: 'saveExport', format: 'csv' }),
      ],
    },
    {
      label: 'Edit',
      submenu: [
        { role: 'undo', label: 'Undo' }, { role: 'redo', label: 'Redo' }, { type: 'separator' },
        { role: 'cut', label: 'Cut' }, { role: 'copy', label: 'Copy' }, { role: 'paste', label: 'Paste' },
        { role: 'selectAll', label: 'Select all' },
      ],
    },
    {
      label: 'Display',
      submenu: [
        { role: 'resetZoom', label: 'Actual size' }, { role: 'zoomIn', label: 'Larger' }, { role: 'zoomOut', label: 'Smaller' },
        { type: 'separator' }, { role: 'togglefullscreen', label: 'Full screen (projector)' },
      ],
    },
  ];
}
