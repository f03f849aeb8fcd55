/**
 * The shared error helpers (src/engine/errors.ts): the message of anything thrown, and the one
 * guard that tells a cancellation (a worker run or a kernel fetch stopped on request) from a
 * failure.
 */
import { BridgeError } from '../../src/bridge/errors';
import { errorMessage, isCancellation, PolyadicError } from '../../src/engine/errors';
import { RunCancelled } from '../../src/worker/pool';

describe('errors', () => {
  describe('#errorMessage', () => {
    it('should give an Error’s message and any other value as text', () => {
      expect(errorMessage(new PolyadicError('input', 'Column x is empty.'))).toBe('Column x is empty.');
      expect(errorMessage(new TypeError('bad'))).toBe('bad');
      expect(errorMessage('plain')).toBe('plain');
      expect(errorMessage(42)).toBe('42');
    });
  });

  describe('#isCancellation', () => {
    it('should tell a cancelled run and a cancelled fetch from failures', () => {
      expect(isCancellation(new RunCancelled())).toBe(true);
      expect(isCancellation(new BridgeError('cancelled', 'The fetch was cancelled.'))).toBe(true);
      expect(isCancellation(new BridgeError('closed', 'The kernel closed the channel.'))).toBe(false);
      expect(isCancellation(new PolyadicError('input', 'Column x is empty.'))).toBe(false);
      expect(isCancellation({ kind: 'cancelled' })).toBe(false);
      expect(isCancellation(undefined)).toBe(false);
    });
  });
});
