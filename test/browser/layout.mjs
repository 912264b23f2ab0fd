// Layout checks the browser tests share: nothing may reach past the window's right edge.

/** Elements of the page (through shadow roots) that reach past the window's right edge, and tables scrolled sideways. */
export function overflowing(page) {
  return page.evaluate(() => {
    const out = [];
    const walk = (root) => {
      for (const el of root.querySelectorAll('*')) {
        const r = el.getBoundingClientRect();
        if (r.width > 0 && r.right > window.innerWidth + 0.5) out.push(`${el.tagName.toLowerCase()}${el.id ? `#${el.id}` : ''} reaches ${r.right.toFixed(0)} px`);
        if (el.tagName === 'RF-METRICS-TABLE' && el.scrollWidth > el.clientWidth + 1) out.push(`the metrics table scrolls (${el.scrollWidth} px in ${el.clientWidth})`);
        if (el.shadowRoot) walk(el.shadowRoot);
      }
    };
    walk(document);
    if (document.documentElement.scrollWidth > window.innerWidth) out.push(`the page is ${document.documentElement.scrollWidth} px wide`);
    return out;
  });
}
