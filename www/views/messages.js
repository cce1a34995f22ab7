// The message line above the map: progress notes (polite) and errors (announced at once).

export function createMessages(box) {
  return {
    info(text) {
      box.className = 'message';
      box.setAttribute('role', 'status');
      box.textContent = text;
      box.hidden = false;
    },
    error(text) {
      box.className = 'message error';
      box.setAttribute('role', 'alert');
      box.textContent = text;
      box.hidden = false;
    },
    clear() {
      box.hidden = true;
      box.textContent = '';
    },
  };
}
