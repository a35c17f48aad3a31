export async function loader() {
  throw new Response("There is nothing at this address.", { status: 404 });
}

export default function NotFoundRoute() {
  return null;
}
