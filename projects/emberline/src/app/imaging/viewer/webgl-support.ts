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
