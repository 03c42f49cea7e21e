/**
 * Stores the suggested lesion of each tumour structure (shared `suggestLesionLinks`: by size,
 * position only breaking near-ties; a suggestion only). Run when a label map is imported, when
 * the case's lesions change and when a link is released or a structure becomes or stops being a
 * tumour. A confirmed link is never touched; a lesion confirmed for one structure of a series is
 * not suggested for another of that series. Nothing is flushed here: the caller's one flush
 * writes the suggestions with its own change and audit event.
 */
import { ref } from '@mikro-orm/core';
import type { EntityManager } from '@mikro-orm/postgresql';
import {
  decodeLabelMapFile,
  measureLabels,
  suggestLesionLinks,
  type LiverBox,
  type Vec3,
  type VolumeGeometry,
} from '@emberline/shared';
import type { Lesion } from '../cases/lesion.entity';
import type { FileStore } from '../imaging/file-store';
import type { ImageSeries } from '../imaging/image-series.entity';
import { seriesGeometry } from './label-map-decode';
import { LabelMap } from './label-map.entity';
import { Structure } from './structure.entity';

/** A structure whose suggestion changed: what it was, what it is. */
export interface SuggestionChange {
  structureId: string;
  fromLesionId: string | null;
  toLesionId: string | null;
}

/**
 * Clears the links of structures that are not tumours and stores the suggestion of every
 * unconfirmed tumour of one series, measured on `labels` (the series' label map, i fastest).
 * `structures` are all of the series' rows, managed by the caller's entity manager.
 */
export function applyLesionSuggestions(
  structures: readonly Structure[],
  lesions: readonly Lesion[],
  labels: ArrayLike<number>,
  geometry: VolumeGeometry,
): SuggestionChange[] {
  const changes: SuggestionChange[] = [];
  const setLink = (structure: Structure, lesion: Lesion | null, isConfirmed: boolean) => {
    const before = structure.lesion?.id ?? null;
    const after = lesion?.id ?? null;
    if (before !== after)
      changes.push({ structureId: structure.id, fromLesionId: before, toLesionId: after });
    structure.lesion = lesion ? ref(lesion) : null;
    structure.isLesionConfirmed = isConfirmed;
  };
  const known = new Set(lesions.map((lesion) => lesion.id));
  for (const structure of structures) {
    const isTumour = structure.kind === 'tumour';
    const isLinkGone = structure.lesion !== null && !known.has(structure.lesion.id);
    // A link of a structure that is no tumour, or to a lesion removed from the Summary, goes
    // (its confirmation with it: there is nothing left to confirm).
    if ((!isTumour && (structure.lesion || structure.isLesionConfirmed)) || isLinkGone) {
      setLink(structure, null, false);
    }
  }
  const tumours = structures.filter((s) => s.kind === 'tumour' && !s.isLesionConfirmed);
  if (tumours.length === 0) return changes;
  const taken = new Set(
    structures
      .filter((s) => s.kind === 'tumour' && s.isLesionConfirmed && s.lesion)
      .map((s) => s.lesion?.id),
  );
  const free = lesions.filter((lesion) => !taken.has(lesion.id));
  const livers = structures.filter((s) => s.kind === 'liver').map((s) => s.labelValue);
  const measured = measureLabels(labels, geometry, [
    ...tumours.map((s) => s.labelValue),
    ...livers,
  ]);
  const present = tumours.filter((s) => measured.has(s.labelValue));
  const suggested = suggestLesionLinks({
    tumours: present.map((s) => {
      const found = measured.get(s.labelValue);
      if (!found) throw new Error('a measured tumour went missing');
      return {
        id: s.id,
        volumeMm3: found.volumeMm3,
        extentMm: found.extentMm,
        centroidLps: found.centroidLps,
      };
    }),
    lesions: free.map((lesion) => ({
      id: lesion.id,
      segment: lesion.segment,
      diameterMm: lesion.diameterMm,
    })),
    liver: liverBoxOf(livers.map((value) => measured.get(value)?.boxLps)),
  });
  const lesionById = new Map(free.map((lesion) => [lesion.id, lesion]));
  for (const structure of tumours) {
    const lesionId = suggested.get(structure.id) ?? null;
    setLink(structure, lesionId ? (lesionById.get(lesionId) ?? null) : null, false);
  }
  return changes;
}

/** The LPS box around every liver label's box (a liver drawn in parts); null without one. */
function liverBoxOf(boxes: readonly ({ min: Vec3; max: Vec3 } | undefined)[]): LiverBox | null {
  const present = boxes.filter((box) => box !== undefined);
  if (present.length === 0) return null;
  const min: Vec3 = [Infinity, Infinity, Infinity];
  const max: Vec3 = [-Infinity, -Infinity, -Infinity];
  for (const box of present) {
    for (let axis = 0; axis < 3; axis++) {
      min[axis] = Math.min(min[axis], box.min[axis]);
      max[axis] = Math.max(max[axis], box.max[axis]);
    }
  }
  return { min, max };
}

/** A series with a label map, its label map row and all its structures (lesions loaded). */
export interface SuggestionTarget {
  series: ImageSeries;
  labelMap: LabelMap;
  structures: Structure[];
}

/**
 * The series (of a case, or one series) that have a label map, with their structures. Load them
 * before changing any structure: a query of a changed entity type would flush it early.
 */
export async function loadSuggestionTargets(
  em: EntityManager,
  scope: { caseId: string } | { seriesId: string },
): Promise<SuggestionTarget[]> {
  const labelMaps = await em.find(
    LabelMap,
    'caseId' in scope ? { series: { clinicalCase: scope.caseId } } : { series: scope.seriesId },
    { populate: ['series'] },
  );
  if (labelMaps.length === 0) return [];
  const structures = await em.find(
    Structure,
    { series: { $in: labelMaps.map((labelMap) => labelMap.series.id) } },
    { orderBy: { labelValue: 'asc' }, populate: ['lesion'] },
  );
  return labelMaps.map((labelMap) => ({
    series: labelMap.series.getEntity(),
    labelMap,
    structures: structures.filter((structure) => structure.series.id === labelMap.series.id),
  }));
}

/**
 * Refreshes the suggestions of the targets, reading a stored label map only where an
 * unconfirmed tumour needs it. `lesions` are the case's lesions as they will be once the caller
 * flushes (a new one included, a removed one left out).
 */
export async function refreshLesionSuggestions(
  store: FileStore,
  targets: readonly SuggestionTarget[],
  lesions: readonly Lesion[],
): Promise<SuggestionChange[]> {
  const changes: SuggestionChange[] = [];
  for (const { series, labelMap, structures } of targets) {
    const geometry = seriesGeometry(series);
    const needsVoxels = structures.some((s) => s.kind === 'tumour' && !s.isLesionConfirmed);
    const labels = needsVoxels
      ? decodeLabelMapFile(await store.readWhole(labelMap.storageKey)).labels
      : [];
    changes.push(...applyLesionSuggestions(structures, lesions, labels, geometry));
  }
  return changes;
}
