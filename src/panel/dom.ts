/**
 * DOM helpers shared by the panel's views. Text goes in through `textContent` only:
 * notebook names, column names and values are untrusted and never become markup.
 */

/** An element with a class and, optionally, text. */
export function textElement<K extends keyof HTMLElementTagNameMap>(
  tag: K,
  className: string,
  text?: string
): HTMLElementTagNameMap[K] {
  const node = document.createElement(tag);
  node.className = className;
  if (text !== undefined) {
    node.textContent = text;
  }
  return node;
}

let elementCounter = 0;

/** A fresh id for an element, `prefix-N`, unique in the page. */
export function uniqueId(prefix: string): string {
  return `${prefix}-${++elementCounter}`;
}

/** A labelled select of fixed choices: the row (label and select) and the select. */
export interface ILabelledSelect {
  row: HTMLElement;
  select: HTMLSelectElement;
}

/** A labelled select of fixed `[value, text]` choices, calling `onChange` with the value chosen. */
export function labelledSelect(label: string, choices: readonly (readonly [string, string])[], onChange: (value: string) => void): ILabelledSelect {
  const id = uniqueId('pd-select');
  const row = textElement('div', 'pd-Field');
  const labelNode = textElement('label', 'pd-Field-label', label);
  labelNode.htmlFor = id;
  const node = document.createElement('select');
  node.id = id;
  node.className = 'jp-mod-styled';
  node.append(
    ...choices.map(([value, text]) => {
      const option = textElement('option', '', text);
      option.value = value;
      return option;
    })
  );
  node.addEventListener('change', () => onChange(node.value));
  row.append(labelNode, node);
  return { row, select: node };
}
