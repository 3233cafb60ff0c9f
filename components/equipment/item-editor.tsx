"use client";
import { ItemForm, type ItemFormValues } from "./item-form";
import { Reveal } from "./reveal";

/** "Correct this item", opening the register's form with the item as it stands. */
export function ItemEditor({ item }: { item: ItemFormValues }) {
  return (
    <Reveal label="Correct this item" testId="edit-item">
      {(close) => <ItemForm initial={item} onDone={close} />}
    </Reveal>
  );
}

/** "Register an item", opening the register's form for a new item. */
export function NewItem() {
  return (
    <Reveal label="Register an item" testId="register-item">
      {() => <ItemForm />}
    </Reveal>
  );
}
