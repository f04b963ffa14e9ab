import { onBeforeUnmount, onMounted } from 'vue';

function isTyping(target: EventTarget | null): boolean {
  if (!(target instanceof HTMLElement)) return false;
  const tag = target.tagName;
  return tag === 'INPUT' || tag === 'TEXTAREA' || tag === 'SELECT' || target.isContentEditable;
}

/** Press `/` (outside a text field) to run `focus`, e.g. to jump to a search box. */
export function useSlashFocus(focus: () => void): void {
  function onKey(e: KeyboardEvent): void {
    if (e.key !== '/' || e.ctrlKey || e.metaKey || e.altKey || isTyping(e.target)) return;
    if (document.querySelector('.n-modal-container .n-modal, .n-dialog')) return;
    e.preventDefault();
    focus();
  }
  onMounted(() => window.addEventListener('keydown', onKey));
  onBeforeUnmount(() => window.removeEventListener('keydown', onKey));
}
