// What every results view is made of: figures (an <img> of the core's SVG, with PNG and SVG export buttons whose
// accessible names say which figure they save), tables that scroll in their own box, notes, the methods paragraph
// with a Copy button, and a row of exports. A view is a function PD.views[kind](record, container, exports) that
// adds these pieces from record.result only.
'use strict';
(function (PD) {
  const { el } = PD;

  // A grid of figures: [{ name, svg, title, alt }]; a figure whose svg is missing is left out.
  PD.figures = function (container, figures, ex) {
    const grid = el('div', null, 'figures');
    figures.filter((f) => f.svg).forEach((f) => {
      const fig = el('figure');
      fig.dataset.figure = f.name;
      const img = el('img');
      img.alt = f.alt;
      // Never drawn smaller than 85 % of its own size (12 px text stays above 10 px) nor larger than 125 %: a
      // figure wider than its place scrolls in its own box, and a wide one (many neurons' outputs) takes the
      // grid's whole row.
      const size = /<svg[^>]*\bwidth="([\d.]+)"[^>]*\bheight="([\d.]+)"/.exec(f.svg);
      if (size) {
        img.width = Math.round(Number(size[1])); img.height = Math.round(Number(size[2]));
        img.style.minWidth = `${Math.round(0.85 * Number(size[1]))}px`;
        img.style.maxWidth = `${Math.round(1.25 * Number(size[1]))}px`;
        if (Number(size[1]) > 700) fig.classList.add('wide');
      }
      img.src = URL.createObjectURL(new Blob([f.svg], { type: 'image/svg+xml' }));
      fig.appendChild(img);
      const cap = el('figcaption');
      cap.appendChild(el('span', f.title));
      const buttons = el('span', null, 'row');
      buttons.appendChild(PD.button('PNG', () => savePng(img, ex.name(`-${f.name}.png`)), `Save the ${f.title.toLowerCase()} figure as PNG`));
      buttons.appendChild(PD.button('SVG', () => ex.text(`-${f.name}.svg`, f.svg, 'image/svg+xml'), `Save the ${f.title.toLowerCase()} figure as SVG`));
      cap.appendChild(buttons);
      fig.appendChild(cap);
      grid.appendChild(fig);
    });
    container.appendChild(grid);
  };

  function savePng(img, name) {
    const scale = 2;
    const canvas = el('canvas');
    canvas.width = img.naturalWidth * scale; canvas.height = img.naturalHeight * scale;
    const ctx = canvas.getContext('2d');
    ctx.scale(scale, scale);
    ctx.drawImage(img, 0, 0);
    canvas.toBlob((blob) => PD.download(name, blob), 'image/png');
  }

  // A table in its own scrolling box: head is a list of header cells, rows a list of lists of cells; a cell is a
  // value, or { text, cls, span, header } for a text cell, a merged cell or a row header.
  PD.table = function (container, caption, head, rows) {
    const wrap = el('div', null, 'scroll');
    wrap.tabIndex = 0;
    wrap.setAttribute('role', 'region');
    wrap.setAttribute('aria-label', caption);
    const t = el('table');
    t.appendChild(el('caption', caption));
    const hr = el('tr');
    head.forEach((h, i) => { const th = el('th', h, i === 0 ? 'text' : ''); th.scope = 'col'; hr.appendChild(th); });
    t.appendChild(hr);
    rows.forEach((row) => {
      const tr = el('tr');
      row.forEach((c) => {
        const cell = c !== null && typeof c === 'object' ? c : { text: c };
        const td = el(cell.header ? 'th' : 'td', cell.text, cell.cls);
        if (cell.header) td.scope = 'row';
        if (cell.span) td.colSpan = cell.span;
        tr.appendChild(td);
      });
      t.appendChild(tr);
    });
    wrap.appendChild(t);
    container.appendChild(wrap);
    return t;
  };

  // The report's warnings (in the page's words) and, with nested selection, how often each C was chosen.
  PD.notes = function (container, report) {
    const ul = el('ul', null, 'warnings');
    (report.warnings || []).forEach((w) => ul.appendChild(el('li', PD.pageWords(w))));
    if (report.tuning) {
      const used = report.tuning.chosen.filter((c) => c.fits > 0)
        .map((c) => `C = ${c.c}${c.gamma_factor ? ', γ × ' + c.gamma_factor : ''} in ${c.fits} fit${c.fits === 1 ? '' : 's'}`);
      ul.appendChild(el('li', 'Settings chosen by nested cross-validation: ' + used.join('; '), 'info'));
    }
    if (ul.children.length) container.appendChild(ul);
  };

  PD.methods = function (container, text) {
    if (!text) return;
    container.appendChild(el('h4', 'Methods'));
    // Shown with each number kept on the line of its "%"; copied exactly as the command line writes it.
    const p = el('p', PD.unbroken(text), 'methods');
    container.appendChild(p);
    const row = el('p', null, 'row');
    const status = el('span');
    status.setAttribute('role', 'status');
    row.appendChild(PD.button('Copy methods paragraph', async () => {
      try { await navigator.clipboard.writeText(text); status.textContent = 'Copied.'; } catch (_) {
        const range = document.createRange(); range.selectNodeContents(p);
        const sel = getSelection(); sel.removeAllRanges(); sel.addRange(range);
        status.textContent = 'Selected: press Ctrl+C to copy.';
      }
    }));
    row.appendChild(status);
    container.appendChild(row);
  };

  // Export buttons: [[visible text, accessible name, action]].
  PD.exportRow = function (container, items) {
    container.appendChild(el('h4', 'Save'));
    const row = el('p', null, 'row exports');
    items.forEach(([text, name, action]) => row.appendChild(PD.button(text, action, name)));
    container.appendChild(row);
  };
}(window.PD));
