/** The editor's plain records live in shared/ so the server converts stored geometry the same way. */
export * from '../../shared/editor/model';
