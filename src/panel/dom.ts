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
