/**
 * vtk.js 37 ships no types for its marching cubes filter; this declares the part the viewer
 * uses (see node_modules/@kitware/vtk.js/Filters/General/ImageMarchingCubes.js).
 */
declare module '@kitware/vtk.js/Filters/General/ImageMarchingCubes' {
  import type vtkImageData from '@kitware/vtk.js/Common/DataModel/ImageData';
  import type vtkPolyData from '@kitware/vtk.js/Common/DataModel/PolyData';

  export interface vtkImageMarchingCubes {
    setInputData(image: vtkImageData): void;
    getOutputData(): vtkPolyData;
    delete(): void;
  }

  const vtkImageMarchingCubes: {
    newInstance(initialValues?: {
      contourValue?: number;
      computeNormals?: boolean;
      mergePoints?: boolean;
    }): vtkImageMarchingCubes;
  };
  export default vtkImageMarchingCubes;
}
