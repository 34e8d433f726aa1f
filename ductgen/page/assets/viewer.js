// A small offline 3D viewer for the built STL files (binary STL, mm). Drawn on a 2D canvas
// with flat shading and depth-sorted triangles (no WebGL, so it works without a GPU and in
// headless browsers). Drag or arrow keys turn it, + / - zoom, 0 resets.
"use strict";

window.DuctViewer = class {
  constructor(canvas) {
    this.canvas = canvas; this.tris = null; this.reset();
    let drag = null;
    canvas.addEventListener("pointerdown", (e) => { drag = [e.clientX, e.clientY]; canvas.setPointerCapture(e.pointerId); });
    canvas.addEventListener("pointerup", () => { drag = null; });
    canvas.addEventListener("pointermove", (e) => {
      if (!drag) return;
      this.yaw += (e.clientX - drag[0]) * 0.01; this.pitch += (e.clientY - drag[1]) * 0.01;
      drag = [e.clientX, e.clientY]; this.request();
    });
    canvas.addEventListener("wheel", (e) => { e.preventDefault(); this.zoom *= e.deltaY < 0 ? 1.1 : 1 / 1.1; this.request(); }, { passive: false });
    canvas.addEventListener("keydown", (e) => {
      const k = e.key, step = 0.12;
      if (k === "ArrowLeft") this.yaw -= step; else if (k === "ArrowRight") this.yaw += step;
      else if (k === "ArrowUp") this.pitch -= step; else if (k === "ArrowDown") this.pitch += step;
      else if (k === "+" || k === "=") this.zoom *= 1.1; else if (k === "-") this.zoom /= 1.1;
      else if (k === "0") this.reset(); else return;
      e.preventDefault(); this.request();
    });
  }
  reset() { this.yaw = -0.6; this.pitch = 0.5; this.zoom = 1; }
  async load(url) {
    const r = await fetch(url);
    if (!r.ok) { this.message(`cannot load ${url}`); return; }
    const buf = await r.arrayBuffer();
    const dv = new DataView(buf);
    const n = dv.getUint32(80, true);
    if (84 + 50 * n !== buf.byteLength) { this.message("not a binary STL"); return; }
    const v = new Float32Array(9 * n);
    const lo = [Infinity, Infinity, Infinity], hi = [-Infinity, -Infinity, -Infinity];
    for (let i = 0; i < n; i++) {
      const o = 84 + 50 * i + 12;
      for (let j = 0; j < 9; j++) {
        const x = dv.getFloat32(o + 4 * j, true);
        v[9 * i + j] = x;
        const a = j % 3;
        if (x < lo[a]) lo[a] = x; if (x > hi[a]) hi[a] = x;
      }
    }
    this.centre = lo.map((l, a) => (l + hi[a]) / 2);
    this.radius = Math.max(hi[0] - lo[0], hi[1] - lo[1], hi[2] - lo[2]) / 2 || 1; // longest half-side
    this.tris = v; this.count = n;
    this.canvas.dataset.triangles = String(n);
    this.request();
  }
  message(t) {
    const c = this.canvas.getContext("2d");
    c.clearRect(0, 0, this.canvas.width, this.canvas.height); c.fillStyle = "#1d2b36"; c.fillText(t, 10, 20);
  }
  request() {
    if (this.pending) return;
    this.pending = true;
    requestAnimationFrame(() => { this.pending = false; this.draw(); });
  }
  draw() {
    if (!this.tris) return;
    const cv = this.canvas, dpr = window.devicePixelRatio || 1;
    const w = Math.max(1, Math.round(cv.clientWidth * dpr)), h = Math.max(1, Math.round(cv.clientHeight * dpr));
    if (cv.width !== w || cv.height !== h) { cv.width = w; cv.height = h; }
    const c = cv.getContext("2d");
    c.fillStyle = "#eef2f4"; c.fillRect(0, 0, w, h); c.lineWidth = 0.7 * dpr; c.lineJoin = "round";
    const cy = Math.cos(this.yaw), sy = Math.sin(this.yaw), cp = Math.cos(this.pitch), sp = Math.sin(this.pitch);
    const s = (0.45 * Math.max(Math.min(w, h), 0.6 * w) / this.radius) * this.zoom;
    const [mx, my, mz] = this.centre, n = this.count, v = this.tris;
    const px = new Float32Array(3 * n), py = new Float32Array(3 * n), depth = new Float32Array(n), shade = new Float32Array(n);
    const keep = [];
    for (let i = 0; i < n; i++) {
      const q = [];
      for (let j = 0; j < 3; j++) {
        const b = 9 * i + 3 * j;
        const x = v[b] - mx, y = v[b + 1] - my, z = v[b + 2] - mz;
        const x1 = cy * x - sy * y, y1 = sy * x + cy * y;          // turn about z (up)
        const y2 = cp * y1 - sp * z, z2 = sp * y1 + cp * z;        // tilt about the screen x
        q.push([x1, y2, z2]);
      }
      const ux = q[1][0] - q[0][0], uy = q[1][1] - q[0][1], uz = q[1][2] - q[0][2];
      const vx = q[2][0] - q[0][0], vy = q[2][1] - q[0][1], vz = q[2][2] - q[0][2];
      const nx = uy * vz - uz * vy, ny = uz * vx - ux * vz, nz = ux * vy - uy * vx;
      if (ny > 0) continue;                                         // faces away (viewer at -y)
      const len = Math.hypot(nx, ny, nz) || 1;
      shade[i] = 0.35 + 0.65 * Math.max(0, (-0.3 * nx - 0.8 * ny + 0.5 * nz) / len);
      for (let j = 0; j < 3; j++) { px[3 * i + j] = w / 2 + s * q[j][0]; py[3 * i + j] = h / 2 - s * q[j][2]; }
      depth[i] = q[0][1] + q[1][1] + q[2][1];
      keep.push(i);
    }
    keep.sort((a, b) => depth[b] - depth[a]);                       // far first
    for (const i of keep) {
      const g = shade[i];
      const col = `rgb(${(25 + 140 * g) | 0},${(70 + 130 * g) | 0},${(78 + 125 * g) | 0})`;
      c.fillStyle = col; c.strokeStyle = col;
      c.beginPath();
      c.moveTo(px[3 * i], py[3 * i]); c.lineTo(px[3 * i + 1], py[3 * i + 1]); c.lineTo(px[3 * i + 2], py[3 * i + 2]);
      c.closePath(); c.fill(); c.stroke(); // the stroke hides hairline seams
    }
    this.canvas.dataset.drawn = String(keep.length);
  }
};
