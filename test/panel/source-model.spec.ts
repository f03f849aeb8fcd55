/**
 * SourceModel: the notebook the panel follows, and the empty state when there is none.
 */
import { INotebookSummary, SourceModel } from '../../src/panel/source/model';

const greenhouse: INotebookSummary = {
  path: 'demo/greenhouse.ipynb',
  name: 'greenhouse.ipynb',
  kernel: { displayName: 'Python 3 (ipykernel)', status: 'idle' }
};

describe('SourceModel', () => {
  describe('#notebook', () => {
    it('should start empty', () => {
      expect(new SourceModel().notebook).toBeNull();
    });

    it('should signal when a notebook is set and when it is cleared', () => {
      const model = new SourceModel();
      let signals = 0;
      model.changed.connect(() => signals++);
      model.notebook = greenhouse;
      expect(model.notebook).toEqual(greenhouse);
      model.notebook = null;
      expect(model.notebook).toBeNull();
      expect(signals).toBe(2);
    });

    it('should not signal for an identical summary', () => {
      const model = new SourceModel();
      model.notebook = greenhouse;
      let signals = 0;
      model.changed.connect(() => signals++);
      model.notebook = { ...greenhouse, kernel: { ...greenhouse.kernel! } };
      model.notebook = null;
      model.notebook = null;
      expect(signals).toBe(1);
    });

    it('should signal when only the kernel status changes', () => {
      const model = new SourceModel();
      model.notebook = greenhouse;
      let signals = 0;
      model.changed.connect(() => signals++);
      model.notebook = { ...greenhouse, kernel: { displayName: 'Python 3 (ipykernel)', status: 'busy' } };
      model.notebook = { ...greenhouse, kernel: null };
      expect(signals).toBe(2);
      expect(model.notebook?.kernel).toBeNull();
    });

    it('should keep its own copy of the summary', () => {
      const model = new SourceModel();
      const summary: INotebookSummary = {
        ...greenhouse,
        kernel: { ...greenhouse.kernel! }
      };
      model.notebook = summary;
      summary.kernel!.status = 'dead';
      summary.name = 'other.ipynb';
      expect(model.notebook).toEqual(greenhouse);
    });
  });

  describe('#dispose', () => {
    it('should disconnect listeners and report itself disposed', () => {
      const model = new SourceModel();
      let signals = 0;
      model.changed.connect(() => signals++);
      model.dispose();
      model.notebook = greenhouse;
      expect(model.isDisposed).toBe(true);
      expect(signals).toBe(0);
    });
  });
});
