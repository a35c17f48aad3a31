import { OM_5130_MAP } from "./maps/om-5130";
import { OM_5150_MAP } from "./maps/om-5150";

// Everything here is invented: the shop, its people, the maker "Orrin Computing" and its boards.

export const DEMO_PASSWORD = "bench-demo-2026";

export const DEMO_SHOP = {
  id: "demo-harbor",
  name: "Harbor Bench Repair",
  currency: "USD",
  taxRateBp: 825,
  warrantyDays: 90,
};

export const DEMO_MEMBERS = [
  { userId: "demo-user-owner", role: "owner", name: "Rosa Almeida", email: "owner@harbor.example" },
  { userId: "demo-user-lead", role: "lead", name: "Dev Okafor", email: "lead@harbor.example" },
  { userId: "demo-user-tech", role: "tech", name: "Mina Park", email: "tech@harbor.example" },
  { userId: "demo-user-desk", role: "desk", name: "Sam Whitlow", email: "desk@harbor.example" },
] as const;

export const DEMO_BOARDS = [
  {
    board: {
      id: "demo-board-om5150",
      maker: "Orrin Computing",
      model: "Marlow 15",
      boardNumber: "OM-5150",
      revision: "C",
      inputType: "usb-c-pd" as const,
      inputMillivolts: 20_000,
      batteryCells: 3,
    },
    mapId: "demo-map-om5150",
    mapName: "Power-up, charger and battery",
    document: OM_5150_MAP,
  },
  {
    board: {
      id: "demo-board-om5130",
      maker: "Orrin Computing",
      model: "Marlow 13",
      boardNumber: "OM-5130",
      revision: "A",
      inputType: "usb-c-pd" as const,
      inputMillivolts: 15_000,
      batteryCells: 2,
    },
    mapId: "demo-map-om5130",
    mapName: "Power-up",
    document: OM_5130_MAP,
  },
];
