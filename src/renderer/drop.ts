// Dropping a folder on the window opens it where its path can be read (the desktop app). The page is
// never let navigate to a dropped file.

export interface DropTargets {
  /** A check runs on the progress screen: nothing is taken. */
  busy(): boolean;
  /** The dropped file's path, or '' where the shell cannot tell it. */
  pathOf(file: File): string;
  open(path: string): void;
  /** A drop whose path could not be read. */
  refused(): void;
}

const hasFiles = (e: DragEvent): boolean => !!e.dataTransfer && Array.from(e.dataTransfer.types ?? []).includes('Files');

/** Listens on the window, marking `root` while files are dragged over; returns the function that stops listening. */
export function listenForDrops(win: Window, root: HTMLElement, t: DropTargets): () => void {
  const onDragOver = (e: DragEvent): void => {
    if (!hasFiles(e)) return;
    e.preventDefault();
    if (e.dataTransfer) e.dataTransfer.dropEffect = t.busy() ? 'none' : 'copy';
    root.classList.toggle('is-dragging', !t.busy());
  };
  const onDragLeave = (e: DragEvent): void => {
    if (e.relatedTarget === null) root.classList.remove('is-dragging');
  };
  const onDrop = (e: DragEvent): void => {
    root.classList.remove('is-dragging');
    if (!e.dataTransfer || !hasFiles(e)) return;
    e.preventDefault();
    if (t.busy()) return;
    const file = e.dataTransfer.files?.[0];
    if (!file) return;
    let path: string;
    try {
      path = t.pathOf(file);
    } catch {
      path = '';
    }
    if (path) t.open(path);
    else t.refused();
  };
  win.addEventListener('dragover', onDragOver);
  win.addEventListener('dragleave', onDragLeave);
  win.addEventListener('drop', onDrop);
  return () => {
    win.removeEventListener('dragover', onDragOver);
    win.removeEventListener('dragleave', onDragLeave);
    win.removeEventListener('drop', onDrop);
  };
}
