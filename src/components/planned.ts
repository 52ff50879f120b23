/** A feature that is planned but not built yet; shown as "coming next", never as if it worked. */
export interface PlannedFeature {
  title: string;
  text: string;
  icon: string;
}
