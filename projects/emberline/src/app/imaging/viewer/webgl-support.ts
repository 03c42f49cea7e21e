/**
 * Whether this browser gives a WebGL2 context, which vtk.js 37 needs (no GPU is required:
 * software rendering such as SwiftShader serves). Asked once with a throwaway canvas, whose
 * context is released at once.
 */
export function hasWebGl2(): boolean {
  if (typeof document === 'undefined' || typeof WebGL2RenderingContext === 'undefined')
    return false;
  try {
    const context = document.createElement('canvas').getContext('webgl2');
    if (!context) return false;
    context.getExtension('WEBGL_lose_context')?.loseContext();
    return true;
  } catch {
    return false;
  }
}

export const noWebGl2Message =
  'This browser gives no WebGL2 context, so the images cannot be drawn here. ' +
  'Open the viewer in a current browser with WebGL2 enabled (it needs no graphics card).';

/** The part of a vtk.js OpenGL render window the helpers below use. */
interface SizedGlWindow {
  setContainer(container: HTMLElement | null): void;
  getCanvas(): HTMLCanvasElement | null;
  setSize(width: number, height: number): void;
}

/** Puts a scene's OpenGL window in its container, the canvas filling it. */
export function attachGlWindow(window: SizedGlWindow, container: HTMLElement): void {
  window.setContainer(container);
  const canvas = window.getCanvas();
  if (canvas) canvas.style.cssText = 'display:block;width:100%;height:100%';
}

/** The drawing buffer in device pixels for a box of CSS pixels (at least one pixel). */
export function resizeGlWindow(window: SizedGlWindow, widthPx: number, heightPx: number): void {
  const ratio = globalThis.devicePixelRatio || 1;
  window.setSize(
    Math.max(1, Math.floor(widthPx * ratio)),
    Math.max(1, Math.floor(heightPx * ratio)),
  );
}
