import { describe, expect, it } from 'vitest';
import { run } from './emulate';
import { InputError } from '../common/cliErrors';

describe('rateline emulate: bad input is one clear line', () => {
  it('asks for a port, checks numbers, and lists the ports when the port is not there', async () => {
    await expect(run([])).rejects.toThrow(InputError);
    await expect(run([])).rejects.toThrow(/no --port PATH given/);
    await expect(run(['--port', '/dev/x', '--speed', 'fast'])).rejects.toThrow(/--speed fast is not a speed factor/);
    await expect(run(['--port', '/dev/x', '--a0', '0.1', '--a-inf', '0.1'])).rejects.toThrow(/--a-inf 0.1 equals --a0, so nothing would change/);
    await expect(run(['--port', '/dev/x', '--order', 'fifth'])).rejects.toThrow(/--order fifth is not an order/);
    await expect(run(['--port', '/dev/rateline-no-such-port'])).rejects.toThrow(/serial port \/dev\/rateline-no-such-port not found \((ports present: |no serial ports)/);
  });
});
