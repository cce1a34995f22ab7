// Getting files from the user: the picker button and drag-and-drop anywhere on the page.
// Files are handed on as {name, bytes} pairs; reading their contents is the core's job.

/** Reads File objects into [{name, bytes: Uint8Array}], in the order given. */
export async function readFiles(files) {
  return Promise.all(Array.from(files, async (file) => ({
    name: file.name,
    bytes: new Uint8Array(await file.arrayBuffer()),
  })));
}

function carriesFiles(event) {
  return Array.from(event.dataTransfer?.types ?? []).includes('Files');
}

/**
 * Wires the picker `button` (opening the hidden `input`) and page-wide drag-and-drop,
 * showing `overlay` while files are dragged over the page. `onFiles(FileList)` receives
 * whatever was chosen or dropped.
 */
export function setupFileSources({ button, input, overlay, onFiles }) {
  button.addEventListener('click', () => input.click());
  input.addEventListener('change', () => {
    if (input.files.length > 0) onFiles(input.files);
    input.value = ''; // choosing the same files again still fires 'change'
  });

  let depth = 0; // dragenter/dragleave fire for every child element crossed
  document.addEventListener('dragenter', (e) => {
    if (!carriesFiles(e)) return;
    e.preventDefault();
    depth += 1;
    overlay.hidden = false;
  });
  document.addEventListener('dragover', (e) => {
    if (!carriesFiles(e)) return;
    e.preventDefault();
    e.dataTransfer.dropEffect = 'copy';
  });
  document.addEventListener('dragleave', (e) => {
    if (!carriesFiles(e)) return;
    depth = Math.max(0, depth - 1);
    if (depth === 0) overlay.hidden = true;
  });
  document.addEventListener('drop', (e) => {
    if (!carriesFiles(e)) return;
    e.preventDefault();
    depth = 0;
    overlay.hidden = true;
    if (e.dataTransfer.files.length > 0) onFiles(e.dataTransfer.files);
  });
}
