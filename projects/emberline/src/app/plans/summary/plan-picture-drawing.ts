import { zoneStyles } from '../../imaging/viewer/assessment/zone-styles';
import { structureKindColours } from '../../imaging/structure-kind-colours';
import type { PlanePoint } from './needle-plane';
import type { PlanPictureScene } from './plan-picture-scene';

/** Emberline's colours on the dark slice: the paths' ember (as in the viewer), text light. */
export const pictureGround = '#10171f';
const needleColour = '#ff8a3d';
const textColour = '#e8edf2';
/** A tumour surface point outside the zone: hollow and white, so it reads without colour. */
const outsideColour = '#ffffff';

/**
 * Draws a plan's picture on a square canvas `sizePx` device pixels wide: the slice's dark
 * ground, the zone outlines (each model's own colour and dash, as the viewer draws them), the
 * tumour surface points, the needles, the orientation letters and the scale bar.
 */
export function drawPlanPicture(
  context: CanvasRenderingContext2D,
  scene: PlanPictureScene,
  sizePx: number,
): void {
  const { window } = scene;
  const pxPerMm = sizePx / (window.maxX - window.minX);
  const at = (point: PlanePoint) => ({
    x: (point.x - window.minX) * pxPerMm,
    y: (point.y - window.minY) * pxPerMm,
  });
  const unit = sizePx / 176;

  context.fillStyle = pictureGround;
  context.fillRect(0, 0, sizePx, sizePx);

  for (const zone of scene.zones) {
    const style = zoneStyles[zone.model];
    context.strokeStyle = style.colour;
    context.lineWidth = (zone.isPrimary ? 2 : 1.5) * unit;
    context.setLineDash(style.dash ? style.dash.split(' ').map((dash) => Number(dash) * unit) : []);
    for (const loop of zone.loops) {
      if (loop.length < 2) continue;
      context.beginPath();
      loop.forEach((point, index) => {
        const { x, y } = at(point);
        if (index === 0) context.moveTo(x, y);
        else context.lineTo(x, y);
      });
      context.closePath();
      context.stroke();
    }
  }
  context.setLineDash([]);

  const dot = 1.6 * unit;
  for (const mark of scene.tumour) {
    const { x, y } = at(mark);
    context.beginPath();
    context.arc(x, y, mark.marginMm < 0 ? dot * 1.6 : dot, 0, 2 * Math.PI);
    if (mark.marginMm < 0) {
      context.strokeStyle = outsideColour;
      context.lineWidth = unit;
      context.stroke();
    } else {
      context.fillStyle = structureKindColours.tumour;
      context.fill();
    }
  }

  for (const needle of [...scene.needles].reverse()) {
    const entry = at(needle.entry);
    const tip = at(needle.tip);
    context.strokeStyle = needleColour;
    context.globalAlpha = needle.isInPlane ? 1 : 0.7;
    context.lineWidth = (needle.isInPlane ? 2.5 : 1.5) * unit;
    context.setLineDash(needle.isInPlane ? [] : [4 * unit, 3 * unit]);
    context.beginPath();
    context.moveTo(entry.x, entry.y);
    context.lineTo(tip.x, tip.y);
    context.stroke();
    context.setLineDash([]);
    context.fillStyle = needleColour;
    context.beginPath();
    context.arc(tip.x, tip.y, 2.5 * unit, 0, 2 * Math.PI);
    context.fill();
    context.globalAlpha = 1;
  }

  drawLetters(context, scene.letters, sizePx, unit);
  drawScaleBar(context, scene.scaleBarMm * pxPerMm, `${scene.scaleBarMm} mm`, sizePx, unit);
}

function drawLetters(
  context: CanvasRenderingContext2D,
  letters: PlanPictureScene['letters'],
  sizePx: number,
  unit: number,
): void {
  const size = 11 * unit;
  context.font = `${size}px Roboto, sans-serif`;
  const inset = 4 * unit;
  // Each letter on a patch of the ground, so that an outline or the needle under it never
  // hides it.
  const letter = (text: string, centreX: number, centreY: number) => {
    const width = context.measureText(text).width + 4 * unit;
    const height = size + 2 * unit;
    context.fillStyle = pictureGround;
    context.fillRect(centreX - width / 2, centreY - height / 2, width, height);
    context.fillStyle = textColour;
    context.textAlign = 'center';
    context.textBaseline = 'middle';
    context.fillText(text, centreX, centreY);
  };
  const half = size / 2 + unit;
  letter(letters.top, sizePx / 2, inset + half);
  letter(letters.bottom, sizePx / 2, sizePx - inset - half);
  letter(letters.left, inset + context.measureText(letters.left).width / 2 + 2 * unit, sizePx / 2);
  letter(
    letters.right,
    sizePx - inset - context.measureText(letters.right).width / 2 - 2 * unit,
    sizePx / 2,
  );
}

/** A bar with end ticks above its length in words, in the bottom-left corner. */
function drawScaleBar(
  context: CanvasRenderingContext2D,
  lengthPx: number,
  text: string,
  sizePx: number,
  unit: number,
): void {
  const left = 8 * unit;
  const baseline = sizePx - 8 * unit;
  context.strokeStyle = textColour;
  context.lineWidth = 1.5 * unit;
  context.beginPath();
  context.moveTo(left, baseline - 4 * unit);
  context.lineTo(left, baseline);
  context.lineTo(left + lengthPx, baseline);
  context.lineTo(left + lengthPx, baseline - 4 * unit);
  context.stroke();
  context.fillStyle = textColour;
  context.font = `${10 * unit}px Roboto, sans-serif`;
  context.textAlign = 'left';
  context.textBaseline = 'bottom';
  context.fillText(text, left, baseline - 5 * unit);
}
