export * from '../../shared/editor/geometry';
