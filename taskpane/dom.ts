/** Small DOM helpers shared by the sections. */
export function element<K extends keyof HTMLElementTagNameMap>(tag: K, attributes: Record<string, string> = {}, text?: string): HTMLElementTagNameMap[K] {
  const node = document.createElement(tag);
  for (const [name, value] of Object.entries(attributes)) node.setAttribute(name, value);
  if (text !== undefined) node.textContent = text;
  return node;
}

/** A section with its heading, as every part of the pane has. */
export function section(id: string, title: string): { root: HTMLElement; body: HTMLElement } {
  const root = element("section", { id, "aria-labelledby": `${id}-title`, class: "pane-section" });
  root.appendChild(element("h2", { id: `${id}-title` }, title));
  const body = element("div", { class: "section-body" });
  root.appendChild(body);
  return { root, body };
}

export function escapeHtml(text: string): string {
  return text.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;");
}
