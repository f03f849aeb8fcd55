/**
 * The shared error helpers (src/engine/errors.ts): the message of anything thrown, and the one
 * guard that tells a cancellation (a worker run or a kernel fetch stopped on request) from a
 * failure.
 */
import { BridgeError } from '../../src/bridge/errors';
import { asPolyadicError, errorMessage, isCancellation, isPolyadicError, PolyadicError } from '../../src/engine/errors';
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

  describe('one error type', () => {
    it('should make the bridge’s and the pool’s errors PolyadicErrors of one kind union, keeping their detail', () => {
      const refused = new BridgeError('kernel', "Column 'x' has an unsupported type.", { frame: 'df', column: 'x' });
      expect(isPolyadicError(refused)).toBe(true);
      expect(refused.kind).toBe('kernel');
      expect(refused.reason).toBe('kernel');
      expect(refused.detail.column).toBe('x');
      expect(new BridgeError('restart', 'The kernel restarted.').kind).toBe('connection');
      expect(new BridgeError('protocol', 'A reply did not follow the protocol.').kind).toBe('internal');
      expect(new BridgeError('usage', 'Bad row cap.', { option: 'rowCap' }).kind).toBe('usage');
      const cancelled = new RunCancelled();
      expect(isPolyadicError(cancelled)).toBe(true);
      expect(cancelled.kind).toBe('cancelled');
      expect(cancelled.name).toBe('RunCancelled');
    });

    it('should wrap anything else as an internal error with its message (a PolyadicError stays itself)', () => {
      const own = new PolyadicError('usage', 'Unknown column.', { column: 'z' });
      expect(asPolyadicError(own)).toBe(own);
      const wrapped = asPolyadicError(new TypeError('x is undefined'));
      expect(wrapped.kind).toBe('internal');
      expect(wrapped.message).toBe('x is undefined');
      expect(asPolyadicError('text').message).toBe('text');
    });
  });

  describe('#isCancellation', () => {
    it('should tell a cancelled run and a cancelled fetch from failures', () => {
      expect(isCancellation(new RunCancelled())).toBe(true);
      expect(isCancellation(new BridgeError('cancelled', 'The fetch was cancelled.'))).toBe(true);
      expect(isCancellation(new BridgeError('closed', 'The kernel closed the channel.'))).toBe(false);
      expect(isCancellation(new PolyadicError('input', 'Column x is empty.'))).toBe(false);
      expect(isCancellation(new PolyadicError('cancelled', 'The robustness check was cancelled.'))).toBe(true);
      expect(isCancellation({ kind: 'cancelled' })).toBe(false);
      expect(isCancellation(undefined)).toBe(false);
    });
  });
});
