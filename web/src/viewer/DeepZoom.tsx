import { useEffect, useRef, useState } from 'react';
import OpenSeadragon from 'openseadragon';

/** What a page can do with an open viewer: read and set the view, export the pixels. */
export interface DeepZoomHandle {
  viewer: OpenSeadragon.Viewer;
  /** full-resolution image width in pixels (from info.json) */
  imageWidth: number;
  imageHeight: number;
  /** centre and visible width of the current view, in full-resolution image pixels */
  view(): { centre: { x: number; y: number }; visibleWidth: number };
  /** show `visibleWidth` image pixels across, centred on `centre` (image pixels), without animation */
  show(centre: { x: number; y: number }, visibleWidth: number): void;
  /** the image pixel under a point of the viewer element (CSS pixels from its top left) */
  imagePoint(x: number, y: number): { x: number; y: number };
  /** where an image pixel is on the viewer element (the inverse of imagePoint) */
  elementPoint(x: number, y: number): { x: number; y: number };
  /** PNG of exactly what is on screen */
  snapshot(): Promise<Blob>;
}

interface Props {
  /** a IIIF Image API info.json address */
  infoUrl: string;
  label: string;
  onReady?: (h: DeepZoomHandle) => void;
  onView?: (h: DeepZoomHandle) => void;
  onHover?: (p: { x: number; y: number } | null, h: DeepZoomHandle) => void;
  className?: string;
}

/**
 * OpenSeadragon on a dark ground, opening a IIIF info.json as its tile source. Pixel-exact at deep
 * zoom: image smoothing is off on the canvas drawer (which also makes the view exportable as PNG),
 * and the zoom may go far past one image pixel per screen pixel so single cells fill the screen.
 */
export function DeepZoom({ infoUrl, label, onReady, onView, onHover, className = '' }: Props) {
  const box = useRef<HTMLDivElement>(null);
  const [failure, setFailure] = useState<string | null>(null);
  const callbacks = useRef({ onReady, onView, onHover });
  callbacks.current = { onReady, onView, onHover };

  useEffect(() => {
    const element = box.current;
    if (!element) return;
    setFailure(null);
    const viewer = OpenSeadragon({
      element,
      tileSources: infoUrl,
      drawer: 'canvas',
      imageSmoothingEnabled: false,
      showNavigationControl: false,
      showNavigator: false,
      maxZoomPixelRatio: 256,
      minZoomImageRatio: 0.5,
      visibilityRatio: 0.2,
      animationTime: 0.4,
      blendTime: 0,
      immediateRender: true,
      crossOriginPolicy: false,
      ajaxWithCredentials: true,
      gestureSettingsMouse: { clickToZoom: false, dblClickToZoom: true, scrollToZoom: true },
    });
    let handle: DeepZoomHandle | null = null;
    // a viewer being taken down must not report its last frames as the place being looked at
    let closed = false;
    viewer.addHandler('open', () => {
      const item = viewer.world.getItemAt(0);
      const size = item.getContentSize();
      const vp = viewer.viewport;
      handle = {
        viewer,
        imageWidth: size.x,
        imageHeight: size.y,
        view() {
          const b = vp.getBounds(true);
          return { centre: { x: (b.x + b.width / 2) * size.x, y: (b.y + b.height / 2) * size.x }, visibleWidth: b.width * size.x };
        },
        show(centre, visibleWidth) {
          const el = viewer.container;
          const aspect = el.clientHeight / Math.max(1, el.clientWidth);
          const w = visibleWidth / size.x;
          const h = w * aspect;
          vp.fitBounds(new OpenSeadragon.Rect(centre.x / size.x - w / 2, centre.y / size.x - h / 2, w, h), true);
        },
        imagePoint(x, y) {
          const p = vp.viewerElementToImageCoordinates(new OpenSeadragon.Point(x, y));
          return { x: p.x, y: p.y };
        },
        elementPoint(x, y) {
          const p = vp.imageToViewerElementCoordinates(new OpenSeadragon.Point(x, y));
          return { x: p.x, y: p.y };
        },
        snapshot() {
          const canvas = viewer.drawer.canvas as HTMLCanvasElement;
          return new Promise((resolve, reject) => canvas.toBlob((b) => (b ? resolve(b) : reject(new Error('the view could not be exported'))), 'image/png'));
        },
      };
      callbacks.current.onReady?.(handle);
    });
    viewer.addHandler('open-failed', () => setFailure('The deep-zoom tiles of this view could not be opened.'));
    viewer.addHandler('viewport-change', () => {
      if (handle && !closed) callbacks.current.onView?.(handle);
    });
    // a finger has no hover: a tap reads the cell under it, and the readout stays until the next tap
    viewer.addHandler('canvas-click', (e) => {
      const pointer = (e.originalEvent as PointerEvent).pointerType;
      if (!handle || !e.quick || pointer === 'mouse' || pointer === undefined) return;
      callbacks.current.onHover?.(handle.imagePoint(e.position.x, e.position.y), handle);
    });
    const move = (e: MouseEvent) => {
      if (!handle) return;
      const r = element.getBoundingClientRect();
      callbacks.current.onHover?.(handle.imagePoint(e.clientX - r.left, e.clientY - r.top), handle);
    };
    const leave = () => handle && callbacks.current.onHover?.(null, handle);
    element.addEventListener('mousemove', move);
    element.addEventListener('mouseleave', leave);
    return () => {
      closed = true;
      element.removeEventListener('mousemove', move);
      element.removeEventListener('mouseleave', leave);
      viewer.destroy();
    };
  }, [infoUrl]);

  return (
    <div className={`bg-night ${className || 'relative'}`}>
      <div ref={box} role="img" aria-label={label} data-testid="deep-zoom" className="absolute inset-0" />
      {failure ? <p className="absolute inset-x-0 top-1/3 text-center text-sm text-white/70">{failure}</p> : null}
    </div>
  );
}
