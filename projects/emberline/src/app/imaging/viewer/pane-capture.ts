import { keyImageLimits } from '@emberline/shared';

/** A picture of one pane, as a PNG. */
export interface PaneCapture {
  png: Blob;
  widthPx: number;
  heightPx: number;
}

/** SVG presentation properties copied inline, so that the overlay looks the same as an image. */
const svgStyleProperties = [
  'display',
  'visibility',
  'opacity',
  'fill',
  'fill-opacity',
  'stroke',
  'stroke-opacity',
  'stroke-width',
  'stroke-dasharray',
  'stroke-linecap',
  'stroke-linejoin',
  'paint-order',
  'filter',
  'font-family',
  'font-size',
  'font-weight',
] as const;

const svgNamespace = 'http://www.w3.org/2000/svg';

/**
 * Takes a picture of a viewer pane as it is on screen: the vtk.js drawing (rendered again just
 * before and copied in the same task, while WebGL's drawing buffer still holds the frame), then
 * the pane's SVG overlay (zone outlines, crosshair, paths, measurement, annotations) with its
 * computed styles written inline, then the text marked `data-capture-label` (the orientation
 * letters), each where it sits in the pane. The picture has the drawing buffer's size (device
 * pixels), scaled down to at most 4096 pixels a side (the server's limit).
 */
export async function capturePane(host: HTMLElement, render: () => void): Promise<PaneCapture> {
  const drawing = host.querySelector<HTMLCanvasElement>(':scope > canvas');
  if (!drawing || drawing.width < 1 || drawing.height < 1) {
    throw new Error('The view has not been drawn yet.');
  }
  const box = host.getBoundingClientRect();
  const fit = Math.min(1, keyImageLimits.maxSidePx / Math.max(drawing.width, drawing.height));
  const width = Math.max(1, Math.round(drawing.width * fit));
  const height = Math.max(1, Math.round(drawing.height * fit));
  const scaleX = width / Math.max(1, box.width);
  const scaleY = height / Math.max(1, box.height);
  const canvas = document.createElement('canvas');
  canvas.width = width;
  canvas.height = height;
  const context = canvas.getContext('2d');
  if (!context) throw new Error('This browser cannot compose the picture.');

  // One task: render, then copy, before the browser presents (and may clear) the frame.
  render();
  context.drawImage(drawing, 0, 0, width, height);

  for (const svg of Array.from(host.querySelectorAll<SVGSVGElement>(':scope > svg'))) {
    const rect = svg.getBoundingClientRect();
    if (rect.width < 1 || rect.height < 1) continue;
    const image = await svgAsImage(svg);
    context.drawImage(
      image,
      (rect.left - box.left) * scaleX,
      (rect.top - box.top) * scaleY,
      rect.width * scaleX,
      rect.height * scaleY,
    );
  }

  for (const label of Array.from(host.querySelectorAll<HTMLElement>('[data-capture-label]'))) {
    const text = label.textContent?.trim();
    if (!text) continue;
    const rect = label.getBoundingClientRect();
    const style = getComputedStyle(label);
    context.save();
    context.scale(scaleX, scaleY);
    context.font = `${style.fontWeight} ${style.fontSize} ${style.fontFamily}`;
    context.fillStyle = style.color;
    context.textBaseline = 'middle';
    context.shadowColor = '#000';
    context.shadowBlur = 3;
    context.fillText(text, rect.left - box.left, rect.top - box.top + rect.height / 2);
    context.restore();
  }

  const png = await new Promise<Blob | null>((resolve) => canvas.toBlob(resolve, 'image/png'));
  if (!png) throw new Error('The picture could not be encoded.');
  return { png, widthPx: width, heightPx: height };
}

/** The SVG with its computed styles inline, loaded as an image (no external resource). */
async function svgAsImage(svg: SVGSVGElement): Promise<HTMLImageElement> {
  const copy = svg.cloneNode(true) as SVGSVGElement;
  copy.setAttribute('xmlns', svgNamespace);
  const originals = [svg, ...Array.from(svg.querySelectorAll('*'))];
  const copies = [copy, ...Array.from(copy.querySelectorAll('*'))];
  originals.forEach((original, index) => {
    const target = copies[index];
    if (!target) return;
    const computed = getComputedStyle(original);
    const inline = svgStyleProperties
      .map((name) => [name, computed.getPropertyValue(name)] as const)
      .filter(([, value]) => value !== '')
      .map(([name, value]) => `${name}:${value}`)
      .join(';');
    target.setAttribute('style', inline);
  });
  copy.style.setProperty('position', 'static');
  const markup = new XMLSerializer().serializeToString(copy);
  const image = new Image();
  image.src = `data:image/svg+xml;charset=utf-8,${encodeURIComponent(markup)}`;
  await image.decode();
  return image;
}
