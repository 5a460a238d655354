/*
 * voidcast page behaviour layered on top of htmx. Served from /assets/voidcast.js so that the
 * Content-Security-Policy can refuse every inline script (no hx-on attributes, no eval).
 * Listeners sit on the document, so they survive htmx's boosted page swaps.
 */
(() => {
  // #import-job (and any element with data-swap-error-codes) swaps the explanatory 4xx answers
  // of the server, which htmx 2 does not swap by default.
  document.addEventListener('htmx:beforeSwap', (event) => {
    const target = event.detail.target;
    const codes = target?.dataset ? target.dataset.swapErrorCodes : undefined;
    if (!codes) return;
    const status = event.detail.xhr.status;
    if (codes.split(' ').map(Number).indexOf(status) >= 0) {
      event.detail.shouldSwap = true;
      event.detail.isError = false;
    }
  });

  const importForm = (event) => {
    const form = event.detail?.elt;
    return form && form.id === 'import-form' ? form : null;
  };
  const byId = (id) => document.getElementById(id);

  // Before the upload: refuse oversize files at once, else show the bytes sent.
  document.addEventListener('htmx:beforeRequest', (event) => {
    const form = importForm(event);
    if (!form) return;
    const big = byId('import-too-large');
    const sending = byId('import-sending');
    let total = 0;
    const files = form.elements.files.files;
    for (let i = 0; i < files.length; i++) total += files[i].size;
    if (total > Number(form.dataset.limitBytes)) {
      event.preventDefault();
      big.hidden = false;
      sending.hidden = true;
      return;
    }
    big.hidden = true;
    sending.hidden = false;
    sending.querySelector('progress').value = 0;
  });

  document.addEventListener('htmx:xhr:progress', (event) => {
    if (!importForm(event) || !event.detail.lengthComputable) return;
    const p = document.querySelector('#import-sending progress');
    p.max = event.detail.total;
    p.value = event.detail.loaded;
  });

  document.addEventListener('htmx:afterRequest', (event) => {
    const form = importForm(event);
    if (!form) return;
    byId('import-sending').hidden = true;
    if (event.detail.xhr && event.detail.xhr.status === 200) form.elements.files.value = '';
  });

  document.addEventListener('htmx:sendError', (event) => {
    if (!importForm(event)) return;
    byId('import-sending').hidden = true;
    byId('import-send-error').hidden = false;
  });
})();
