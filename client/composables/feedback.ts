import { createDiscreteApi } from 'naive-ui';
import { themeOverrides } from '../theme';

/**
 * Toasts and confirmation dialogs usable anywhere (components, router guards,
 * the HTTP client's sign-out), themed like the rest of the app.
 */
const api = createDiscreteApi(['message', 'dialog'], {
  configProviderProps: { themeOverrides },
  messageProviderProps: { placement: 'top', duration: 4000, keepAliveOnHover: true },
});

export const message = api.message;
export const dialog = api.dialog;

export interface ConfirmOptions {
  title: string;
  content: string;
  positiveText: string;
  negativeText?: string;
  danger?: boolean;
}

/** Ask a yes/no question; resolves true when confirmed. */
export function confirm(options: ConfirmOptions): Promise<boolean> {
  return new Promise((resolve) => {
    const open = options.danger ? dialog.warning : dialog.info;
    open({
      title: options.title,
      content: options.content,
      positiveText: options.positiveText,
      negativeText: options.negativeText ?? 'Cancel',
      positiveButtonProps: { 'data-test': 'confirm-ok' } as Record<string, unknown>,
      negativeButtonProps: { 'data-test': 'confirm-cancel' } as Record<string, unknown>,
      onPositiveClick: () => resolve(true),
      onNegativeClick: () => resolve(false),
      onClose: () => resolve(false),
      onMaskClick: () => resolve(false),
      onEsc: () => resolve(false),
    });
  });
}
